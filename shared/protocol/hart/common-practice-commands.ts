/**
 * Common-practice commands 38, 40, 43, 45, 46 and the device variable trim commands 80–83.
 * Layouts from memory of HCF_SPEC-151, not checked against its text.
 */
import { bytesOf, encodeFloat } from './data-types';
import { emptyCodec, FieldReader, type HartCommandCodec } from './codec';

/** Command 38, reset configuration changed flag: no data (revision 7 may add the change counter; from memory). */
export const CMD38_RESET_CHANGED = emptyCodec(38, 'reset configuration changed flag', true);

/** Command 43, set primary variable zero: no data; the device takes the applied pressure as zero (from memory). */
export const CMD43_ZERO = emptyCodec(43, 'set primary variable zero', true);

/** A loop current in mA: the data of commands 40, 45 and 46, request and reply alike (from memory). */
export interface HartCurrentValue {
  currentMa: number;
}

function currentCodec(command: number, name: string, writes: boolean): HartCommandCodec<HartCurrentValue, HartCurrentValue> {
  const encode = (v: HartCurrentValue): Uint8Array => encodeFloat(v.currentMa);
  const decode = (data: Uint8Array): HartCurrentValue | undefined => {
    const f = new FieldReader(data);
    return f.result({ currentMa: f.float() });
  };
  return { command, name, writes, encodeRequest: encode, decodeRequest: decode, encodeResponse: encode, decodeResponse: decode };
}

/** Command 40, enter/exit fixed current mode: the level in mA, 0 to leave (from memory). */
export const CMD40_FIXED_CURRENT = currentCodec(40, 'enter/exit fixed current mode', false);

/** Command 45, trim loop current zero: the current measured by the reference meter at 4 mA (from memory). */
export const CMD45_TRIM_ZERO = currentCodec(45, 'trim loop current zero', true);

/** Command 46, trim loop current gain: the current measured by the reference meter at 20 mA (from memory). */
export const CMD46_TRIM_GAIN = currentCodec(46, 'trim loop current gain', true);

/** Trim points of a device variable (command 80 reply, command 82 data). */
export interface HartTrimPoints {
  deviceVariable: number;
  unitCode: number;
  lower: number;
  upper: number;
}

/** Request of commands 80, 81 and 83: the device variable code. */
export interface HartVariableSelector {
  deviceVariable: number;
}

const selector = {
  encodeRequest: (r: HartVariableSelector) => Uint8Array.of(r.deviceVariable & 0xff),
  decodeRequest(data: Uint8Array): HartVariableSelector | undefined {
    const f = new FieldReader(data);
    return f.result({ deviceVariable: f.uint() });
  },
};

/** Command 80, read device variable trim points: variable, unit, lower, upper (from memory). */
export const CMD80_TRIM_POINTS: HartCommandCodec<HartVariableSelector, HartTrimPoints> = {
  command: 80,
  name: 'read device variable trim points',
  writes: false,
  ...selector,
  encodeResponse: (r) => bytesOf(r.deviceVariable, r.unitCode, encodeFloat(r.lower), encodeFloat(r.upper)),
  decodeResponse(data) {
    const f = new FieldReader(data);
    return f.result({ deviceVariable: f.uint(), unitCode: f.uint(), lower: f.float(), upper: f.float() });
  },
};

/** Command 81 reply: what trims the device accepts. */
export interface HartTrimGuidelines {
  deviceVariable: number;
  /** 1 lower only, 2 upper only, 3 both (from memory). */
  trimPoints: number;
  unitCode: number;
  minLower: number;
  maxLower: number;
  minUpper: number;
  maxUpper: number;
  minDifferential: number;
}

/** Command 81, read device variable trim guidelines (from memory). */
export const CMD81_TRIM_GUIDELINES: HartCommandCodec<HartVariableSelector, HartTrimGuidelines> = {
  command: 81,
  name: 'read device variable trim guidelines',
  writes: false,
  ...selector,
  encodeResponse: (r) =>
    bytesOf(r.deviceVariable, r.trimPoints, r.unitCode, encodeFloat(r.minLower), encodeFloat(r.maxLower), encodeFloat(r.minUpper), encodeFloat(r.maxUpper), encodeFloat(r.minDifferential)),
  decodeResponse(data) {
    const f = new FieldReader(data);
    return f.result({
      deviceVariable: f.uint(),
      trimPoints: f.uint(),
      unitCode: f.uint(),
      minLower: f.float(),
      maxLower: f.float(),
      minUpper: f.float(),
      maxUpper: f.float(),
      minDifferential: f.float(),
    });
  },
};

/** Command 82 data: one trim point with the applied value from the reference (from memory). */
export interface HartTrimPointWrite {
  deviceVariable: number;
  /** 1 lower, 2 upper (from memory). */
  trimPoint: 1 | 2;
  unitCode: number;
  value: number;
}

function decodeTrimWrite(data: Uint8Array): HartTrimPointWrite | undefined {
  const f = new FieldReader(data);
  const deviceVariable = f.uint();
  const point = f.uint();
  const unitCode = f.uint();
  const value = f.float();
  if (f.short || (point !== 1 && point !== 2)) return undefined;
  return { deviceVariable, trimPoint: point, unitCode, value };
}

/** Command 82, write device variable trim point: request and reply alike (from memory). */
export const CMD82_WRITE_TRIM: HartCommandCodec<HartTrimPointWrite, HartTrimPointWrite> = {
  command: 82,
  name: 'write device variable trim point',
  writes: true,
  encodeRequest: (r) => bytesOf(r.deviceVariable, r.trimPoint, r.unitCode, encodeFloat(r.value)),
  decodeRequest: decodeTrimWrite,
  encodeResponse: (r) => bytesOf(r.deviceVariable, r.trimPoint, r.unitCode, encodeFloat(r.value)),
  decodeResponse: decodeTrimWrite,
};

/** Command 83, reset device variable trim to the factory trim: the variable code both ways (from memory). */
export const CMD83_RESET_TRIM: HartCommandCodec<HartVariableSelector, HartVariableSelector> = {
  command: 83,
  name: 'reset device variable trim',
  writes: true,
  ...selector,
  encodeResponse: (r) => Uint8Array.of(r.deviceVariable & 0xff),
  decodeResponse: selector.decodeRequest,
};
