/**
 * Universal commands 0, 1, 2, 3, 13 and 15. Field layouts from memory of HCF_SPEC-127 (revision 7
 * layouts; decoders also take the shorter revision 5 replies), not checked against its text.
 */
import { bytesOf, encodeDate, encodeFloat, packAscii, writeUint, type HartDate } from './data-types';
import { FieldReader, type HartCommandCodec } from './codec';

const NONE = new Uint8Array(0);
const noRequest = { encodeRequest: () => NONE, decodeRequest: () => undefined };

/** Command 0 reply: who the device is. */
export interface HartIdentity {
  /** Expanded device type (bytes 1–2; in revision 5, byte 1 is the manufacturer code). */
  expandedDeviceType: number;
  /** Preambles the device wants from a master. */
  minPreamblesRequest: number;
  universalRevision: number;
  deviceRevision: number;
  softwareRevision: number;
  /** Upper five bits of byte 7. */
  hardwareRevision: number;
  /** Lower three bits of byte 7 (0: Bell 202 current). */
  physicalSignaling: number;
  flags: number;
  /** 24-bit device id, unique within the device type. */
  deviceId: number;
  /** Revision 6+ fields; absent in a 12-byte revision 5 reply. */
  minPreamblesResponse?: number;
  maxDeviceVariables?: number;
  configChangeCounter?: number;
  extendedStatus?: number;
  manufacturerId?: number;
  privateLabel?: number;
  deviceProfile?: number;
}

/** The five bytes of a long address from a command 0 reply (from memory: low six bits of byte 1, byte 2, device id). */
export function uniqueIdOf(identity: Pick<HartIdentity, 'expandedDeviceType' | 'deviceId'>): Uint8Array {
  return bytesOf((identity.expandedDeviceType >> 8) & 0x3f, identity.expandedDeviceType & 0xff, writeUint(identity.deviceId, 3));
}

/** Command 0, read unique identifier (HCF_SPEC-127, from memory: 12 bytes in revision 5, 22 in revision 7). */
export const CMD0_IDENTITY: HartCommandCodec<void, HartIdentity> = {
  command: 0,
  name: 'read unique identifier',
  writes: false,
  ...noRequest,
  encodeResponse: (r) =>
    bytesOf(
      254,
      writeUint(r.expandedDeviceType, 2),
      r.minPreamblesRequest,
      r.universalRevision,
      r.deviceRevision,
      r.softwareRevision,
      ((r.hardwareRevision & 0x1f) << 3) | (r.physicalSignaling & 0x07),
      r.flags,
      writeUint(r.deviceId, 3),
      r.minPreamblesResponse ?? 5,
      r.maxDeviceVariables ?? 4,
      writeUint(r.configChangeCounter ?? 0, 2),
      r.extendedStatus ?? 0,
      writeUint(r.manufacturerId ?? 0, 2),
      writeUint(r.privateLabel ?? 0, 2),
      r.deviceProfile ?? 1,
    ),
  decodeResponse(data) {
    const f = new FieldReader(data);
    f.uint(); // 254, "expansion"
    const expandedDeviceType = f.uint(2);
    const minPreamblesRequest = f.uint();
    const universalRevision = f.uint();
    const deviceRevision = f.uint();
    const softwareRevision = f.uint();
    const hw = f.uint();
    const flags = f.uint();
    const deviceId = f.uint(3);
    const identity: HartIdentity = {
      expandedDeviceType,
      minPreamblesRequest,
      universalRevision,
      deviceRevision,
      softwareRevision,
      hardwareRevision: hw >> 3,
      physicalSignaling: hw & 0x07,
      flags,
      deviceId,
    };
    if (f.short) return undefined;
    if (f.remaining >= 5) {
      identity.minPreamblesResponse = f.uint();
      identity.maxDeviceVariables = f.uint();
      identity.configChangeCounter = f.uint(2);
      identity.extendedStatus = f.uint();
    }
    if (f.remaining >= 5) {
      identity.manufacturerId = f.uint(2);
      identity.privateLabel = f.uint(2);
      identity.deviceProfile = f.uint();
    }
    return identity;
  },
};

/** A device variable as commands 1 and 3 carry it: unit code then value. */
export interface HartVariable {
  unitCode: number;
  value: number;
}

/** Command 1, read primary variable: unit code, value (from memory). */
export const CMD1_PV: HartCommandCodec<void, HartVariable> = {
  command: 1,
  name: 'read primary variable',
  writes: false,
  ...noRequest,
  encodeResponse: (r) => bytesOf(r.unitCode, encodeFloat(r.value)),
  decodeResponse(data) {
    const f = new FieldReader(data);
    return f.result({ unitCode: f.uint(), value: f.float() });
  },
};

/** Command 2 reply. */
export interface HartLoopCurrent {
  currentMa: number;
  percentOfRange: number;
}

/** Command 2, read loop current and percent of range: two floats (from memory). */
export const CMD2_CURRENT: HartCommandCodec<void, HartLoopCurrent> = {
  command: 2,
  name: 'read loop current and percent of range',
  writes: false,
  ...noRequest,
  encodeResponse: (r) => bytesOf(encodeFloat(r.currentMa), encodeFloat(r.percentOfRange)),
  decodeResponse(data) {
    const f = new FieldReader(data);
    return f.result({ currentMa: f.float(), percentOfRange: f.float() });
  },
};

/** Command 3 reply: loop current then up to four variables (PV, SV, TV, QV). */
export interface HartDynamicVariables {
  currentMa: number;
  variables: HartVariable[];
}

/** Command 3, read dynamic variables and loop current: float, then 1–4 × (unit, float) (from memory). */
export const CMD3_DYNAMIC: HartCommandCodec<void, HartDynamicVariables> = {
  command: 3,
  name: 'read dynamic variables and loop current',
  writes: false,
  ...noRequest,
  encodeResponse: (r) => bytesOf(encodeFloat(r.currentMa), ...r.variables.slice(0, 4).flatMap((v) => [v.unitCode, encodeFloat(v.value)])),
  decodeResponse(data) {
    const f = new FieldReader(data);
    const currentMa = f.float();
    const variables: HartVariable[] = [];
    while (f.remaining >= 5 && variables.length < 4) variables.push({ unitCode: f.uint(), value: f.float() });
    return f.result({ currentMa, variables });
  },
};

/** Command 13 reply. */
export interface HartTagDescriptorDate {
  /** Up to 8 packed ASCII characters. */
  tag: string;
  /** Up to 16 packed ASCII characters. */
  descriptor: string;
  date: HartDate;
}

/** Command 13, read tag, descriptor, date: 6 + 12 bytes packed ASCII, 3 bytes date (from memory). */
export const CMD13_TAG: HartCommandCodec<void, HartTagDescriptorDate> = {
  command: 13,
  name: 'read tag, descriptor and date',
  writes: false,
  ...noRequest,
  encodeResponse: (r) => bytesOf(packAscii(r.tag, 6), packAscii(r.descriptor, 12), encodeDate(r.date)),
  decodeResponse(data) {
    const f = new FieldReader(data);
    return f.result({ tag: f.ascii(6), descriptor: f.ascii(12), date: f.date() });
  },
};

/** Command 15 reply: how the PV maps to the loop current. */
export interface HartDeviceInformation {
  /** Common table 6. */
  alarmSelection: number;
  /** Common table 3 (0 linear, 1 square root). */
  transferFunction: number;
  /** Common table 2: the unit of the range values. */
  rangeUnitCode: number;
  urv: number;
  lrv: number;
  /** PV damping, s. */
  damping: number;
  /** Common table 7 (0 not protected, 1 protected). */
  writeProtect: number;
  /** Revision 7 fields: private label distributor (250 in revision 5), analog channel flags. */
  privateLabel?: number;
  analogChannelFlags?: number;
}

/** Command 15, read device information: codes, URV, LRV, damping, write protect (from memory; URV before LRV). */
export const CMD15_INFO: HartCommandCodec<void, HartDeviceInformation> = {
  command: 15,
  name: 'read device information',
  writes: false,
  ...noRequest,
  encodeResponse: (r) =>
    bytesOf(r.alarmSelection, r.transferFunction, r.rangeUnitCode, encodeFloat(r.urv), encodeFloat(r.lrv), encodeFloat(r.damping), r.writeProtect, r.privateLabel ?? 250, r.analogChannelFlags ?? 0),
  decodeResponse(data) {
    const f = new FieldReader(data);
    const info: HartDeviceInformation = {
      alarmSelection: f.uint(),
      transferFunction: f.uint(),
      rangeUnitCode: f.uint(),
      urv: f.float(),
      lrv: f.float(),
      damping: f.float(),
      writeProtect: f.uint(),
    };
    if (f.short) return undefined;
    if (f.remaining >= 1) info.privateLabel = f.uint();
    if (f.remaining >= 1) info.analogChannelFlags = f.uint();
    return info;
  },
};
