/**
 * HART token-passing data link frames (HCF_SPEC-081). Every layout here is written from memory of
 * that specification, which could not be read while this was written; each detail is marked so.
 *
 * On the wire: 5–20 preamble bytes 0xFF, a delimiter, an address (one byte short, five bytes
 * long), optional expansion bytes, the command, the byte count, in a response (or burst) the two
 * status bytes counted in the byte count, the data, and a checksum that is the XOR of every byte
 * from the delimiter to the last data byte ("longitudinal parity", from memory).
 */

/** Preamble byte (from memory of HCF_SPEC-081). */
export const HART_PREAMBLE = 0xff;
/** Fewest and most preambles a sender puts on the wire (from memory: 5 to 20). */
export const HART_PREAMBLES = { min: 5, max: 20 } as const;
/** Fewest preambles the decoder needs before a delimiter to believe a frame starts (from memory: 2). */
export const HART_SYNC_PREAMBLES = 2;

/**
 * Frame kinds by the low three bits of the delimiter (from memory of HCF_SPEC-081): 2 STX, a
 * master's request; 6 ACK, a field device's response; 1 BACK, a burst-mode message.
 */
export type HartFrameKind = 'request' | 'response' | 'burst';

const KIND_BITS: Readonly<Record<HartFrameKind, number>> = { request: 0x02, response: 0x06, burst: 0x01 };

/** Which master a frame is to or from: bit 7 of the first address byte (from memory: 1 = primary). */
export type HartMaster = 'primary' | 'secondary';

/** One-byte polling address: master bit, burst bit, polling address 0–63 in the low six bits (from memory). */
export interface HartShortAddress {
  type: 'short';
  master: HartMaster;
  burst: boolean;
  pollingAddress: number;
}

/**
 * Five-byte unique address: master and burst bits, then the low six bits of the first byte and the
 * four bytes after it taken from command 0's reply (expanded device type and device id; from memory).
 */
export interface HartLongAddress {
  type: 'long';
  master: HartMaster;
  burst: boolean;
  /** Five bytes; the master and burst bits of the first byte are ignored (they come from the fields above). */
  uniqueId: Uint8Array;
}

export type HartAddress = HartShortAddress | HartLongAddress;

/** A response's two status bytes (from memory of HCF_SPEC-081 / -099: response code, field device status). */
export interface HartStatus {
  responseCode: number;
  deviceStatus: number;
}

/** A decoded frame. `data` excludes the status bytes of a response. */
export interface HartFrame {
  kind: HartFrameKind;
  address: HartAddress;
  command: number;
  /** Present on responses and burst messages. */
  status?: HartStatus;
  data: Uint8Array;
  /** Expansion bytes after the address (delimiter bits 5–6 give their count; from memory); usually none. */
  expansion?: Uint8Array;
}

/** What an encoder needs beyond the frame. */
export interface EncodeOptions {
  /** Preamble count, clamped to 5–20. Default 5. */
  preambles?: number;
}

/** XOR of every byte: the frame check byte (from memory of HCF_SPEC-081). */
export function hartChecksum(bytes: Uint8Array, from = 0, to = bytes.length): number {
  let x = 0;
  for (let i = from; i < to; i += 1) x ^= bytes[i] ?? 0;
  return x;
}

/** Delimiter byte for a frame: bit 7 long address, bits 5–6 expansion count, low bits the kind (from memory). */
export function hartDelimiter(kind: HartFrameKind, long: boolean, expansionBytes = 0): number {
  return (long ? 0x80 : 0) | ((expansionBytes & 0x03) << 5) | KIND_BITS[kind];
}

/** Reads a delimiter: `undefined` when the byte is not one (the physical-layer bits 3–4 must be 0 for asynchronous FSK; from memory). */
export function parseDelimiter(byte: number): { kind: HartFrameKind; long: boolean; expansionBytes: number } | undefined {
  if ((byte & 0x18) !== 0) return undefined;
  const low = byte & 0x07;
  const kind = low === 0x02 ? 'request' : low === 0x06 ? 'response' : low === 0x01 ? 'burst' : undefined;
  if (!kind) return undefined;
  return { kind, long: (byte & 0x80) !== 0, expansionBytes: (byte >> 5) & 0x03 };
}

function masterBits(master: HartMaster, burst: boolean): number {
  return (master === 'primary' ? 0x80 : 0) | (burst ? 0x40 : 0);
}

/** The address bytes of a frame. */
export function encodeAddress(address: HartAddress): Uint8Array {
  if (address.type === 'short') {
    if (!Number.isInteger(address.pollingAddress) || address.pollingAddress < 0 || address.pollingAddress > 63) {
      throw new RangeError(`HART polling address must be 0–63, got ${address.pollingAddress}`);
    }
    return Uint8Array.of(masterBits(address.master, address.burst) | address.pollingAddress);
  }
  if (address.uniqueId.length !== 5) throw new RangeError(`HART unique address must be 5 bytes, got ${address.uniqueId.length}`);
  const out = Uint8Array.from(address.uniqueId);
  out[0] = masterBits(address.master, address.burst) | ((out[0] ?? 0) & 0x3f);
  return out;
}

/** Reads address bytes (one or five). */
export function decodeAddress(bytes: Uint8Array): HartAddress {
  const first = bytes[0] ?? 0;
  const master: HartMaster = first & 0x80 ? 'primary' : 'secondary';
  const burst = (first & 0x40) !== 0;
  if (bytes.length === 1) return { type: 'short', master, burst, pollingAddress: first & 0x3f };
  const uniqueId = Uint8Array.from(bytes);
  uniqueId[0] = first & 0x3f;
  return { type: 'long', master, burst, uniqueId };
}

/** True when two addresses name the same device (master and burst bits aside). */
export function sameDevice(a: HartAddress, b: HartAddress): boolean {
  if (a.type === 'short') return b.type === 'short' && a.pollingAddress === b.pollingAddress;
  if (b.type === 'short') return false;
  const mask = (i: number): number => (i === 0 ? 0x3f : 0xff);
  return b.uniqueId.length === 5 && a.uniqueId.every((byte, i) => (byte & mask(i)) === ((b.uniqueId[i] ?? 0) & mask(i)));
}

/**
 * Encodes a frame with its preambles and checksum. Throws `RangeError` on a programmer error (a
 * command or byte count outside one byte, a response without status, a bad address).
 */
export function encodeHartFrame(frame: HartFrame, options: EncodeOptions = {}): Uint8Array {
  if (!Number.isInteger(frame.command) || frame.command < 0 || frame.command > 255) throw new RangeError(`HART command must be 0–255, got ${frame.command}`);
  const hasStatus = frame.kind !== 'request';
  if (hasStatus && !frame.status) throw new RangeError(`a HART ${frame.kind} frame needs its two status bytes`);
  const count = frame.data.length + (hasStatus ? 2 : 0);
  if (count > 255) throw new RangeError(`HART byte count must be ≤ 255, got ${count}`);
  const expansion = frame.expansion ?? new Uint8Array(0);
  if (expansion.length > 3) throw new RangeError('at most 3 HART expansion bytes');
  const preambles = Math.min(HART_PREAMBLES.max, Math.max(HART_PREAMBLES.min, Math.round(options.preambles ?? HART_PREAMBLES.min)));
  const address = encodeAddress(frame.address);
  const body = [hartDelimiter(frame.kind, frame.address.type === 'long', expansion.length), ...address, ...expansion, frame.command, count];
  if (hasStatus && frame.status) body.push(frame.status.responseCode & 0xff, frame.status.deviceStatus & 0xff);
  body.push(...frame.data);
  const out = new Uint8Array(preambles + body.length + 1);
  out.fill(HART_PREAMBLE, 0, preambles);
  out.set(body, preambles);
  out[out.length - 1] = hartChecksum(out, preambles, out.length - 1);
  return out;
}

/** A master's request frame. */
export function hartRequest(address: HartAddress, command: number, data: Uint8Array = new Uint8Array(0)): HartFrame {
  return { kind: 'request', address, command, data };
}

/** A field device's response frame. */
export function hartResponse(address: HartAddress, command: number, status: HartStatus, data: Uint8Array = new Uint8Array(0)): HartFrame {
  return { kind: 'response', address, command, status, data };
}

/** Bytes as spaced upper-case hex, for logs and the record ("FF FF 02 80 00 00 82"). */
export function toHex(bytes: Uint8Array): string {
  return Array.from(bytes, (b) => b.toString(16).padStart(2, '0').toUpperCase()).join(' ');
}
