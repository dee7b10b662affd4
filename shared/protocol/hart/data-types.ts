/**
 * HART data types: packed ASCII, IEEE 754 single floats (big-endian), dates and unsigned integers.
 * Layouts from memory of HCF_SPEC-127 (universal commands, "data types"); not checked against the text.
 */

/**
 * Packed ASCII: four 6-bit characters in three bytes, most significant first. A character is
 * stored as its low six bits; on reading, bit 6 is set again when bit 5 is clear, giving the
 * range 0x20–0x5F (space to underscore: upper-case letters, digits, punctuation; from memory).
 */
export function packAscii(text: string, bytes: number): Uint8Array {
  if (bytes % 3 !== 0) throw new RangeError(`packed ASCII takes a multiple of 3 bytes, got ${bytes}`);
  const chars = (bytes / 3) * 4;
  const upper = text.toUpperCase();
  if (upper.length > chars) throw new RangeError(`"${text}" is longer than ${chars} packed ASCII characters`);
  const padded = upper.padEnd(chars, ' ');
  const out = new Uint8Array(bytes);
  for (let group = 0; group < chars / 4; group += 1) {
    let word = 0;
    for (let k = 0; k < 4; k += 1) {
      const code = padded.charCodeAt(group * 4 + k);
      if (code < 0x20 || code > 0x5f) throw new RangeError(`"${padded[group * 4 + k]}" cannot be written in packed ASCII`);
      word = (word << 6) | (code & 0x3f);
    }
    out[group * 3] = (word >> 16) & 0xff;
    out[group * 3 + 1] = (word >> 8) & 0xff;
    out[group * 3 + 2] = word & 0xff;
  }
  return out;
}

/** True when `text` fits `chars` packed ASCII characters (lower case is written as upper case). */
export function isPackableAscii(text: string, chars: number): boolean {
  const upper = text.toUpperCase();
  if (upper.length > chars) return false;
  for (let i = 0; i < upper.length; i += 1) {
    const code = upper.charCodeAt(i);
    if (code < 0x20 || code > 0x5f) return false;
  }
  return true;
}

/** Unpacks packed ASCII; trailing spaces are kept (callers trim). Reads whole groups of three bytes. */
export function unpackAscii(bytes: Uint8Array): string {
  let text = '';
  for (let g = 0; g + 3 <= bytes.length; g += 3) {
    const word = ((bytes[g] ?? 0) << 16) | ((bytes[g + 1] ?? 0) << 8) | (bytes[g + 2] ?? 0);
    for (let k = 3; k >= 0; k -= 1) {
      const six = (word >> (k * 6)) & 0x3f;
      text += String.fromCharCode(six & 0x20 ? six : six | 0x40);
    }
  }
  return text;
}

/** IEEE 754 single precision, big-endian (from memory of HCF_SPEC-127). */
export function encodeFloat(value: number): Uint8Array {
  const out = new Uint8Array(4);
  new DataView(out.buffer).setFloat32(0, value, false);
  return out;
}

/** Reads a big-endian single float at `offset`; `undefined` when fewer than four bytes remain. */
export function decodeFloat(bytes: Uint8Array, offset = 0): number | undefined {
  if (offset < 0 || offset + 4 > bytes.length) return undefined;
  return new DataView(bytes.buffer, bytes.byteOffset + offset, 4).getFloat32(0, false);
}

/**
 * The value a device sends for "not a number" (0x7F 0xA0 0x00 0x00, from memory of HCF_SPEC-127);
 * any NaN decodes as NaN.
 */
export const HART_NAN = Uint8Array.of(0x7f, 0xa0, 0x00, 0x00);

/** A calendar date as HART carries it: day, month, year − 1900 in three bytes (from memory). */
export interface HartDate {
  year: number;
  month: number;
  day: number;
}

/** Encodes a date; years 1900–2155. Throws `RangeError` outside. */
export function encodeDate(date: HartDate): Uint8Array {
  if (date.year < 1900 || date.year > 2155 || date.month < 1 || date.month > 12 || date.day < 1 || date.day > 31) {
    throw new RangeError(`${date.year}-${date.month}-${date.day} cannot be written as a HART date`);
  }
  return Uint8Array.of(date.day, date.month, date.year - 1900);
}

/** Decodes three date bytes. */
export function decodeDate(bytes: Uint8Array, offset = 0): HartDate {
  return { day: bytes[offset] ?? 0, month: bytes[offset + 1] ?? 0, year: 1900 + (bytes[offset + 2] ?? 0) };
}

/** Big-endian unsigned integer of `length` bytes at `offset`. */
export function readUint(bytes: Uint8Array, offset: number, length: number): number {
  let v = 0;
  for (let i = 0; i < length; i += 1) v = v * 256 + (bytes[offset + i] ?? 0);
  return v;
}

/** Big-endian unsigned integer as `length` bytes. */
export function writeUint(value: number, length: number): Uint8Array {
  const out = new Uint8Array(length);
  let v = Math.max(0, Math.floor(value));
  for (let i = length - 1; i >= 0; i -= 1) {
    out[i] = v % 256;
    v = Math.floor(v / 256);
  }
  return out;
}

/** Concatenates byte arrays and plain byte values. */
export function bytesOf(...parts: (Uint8Array | number)[]): Uint8Array {
  const arrays = parts.map((p) => (typeof p === 'number' ? Uint8Array.of(p & 0xff) : p));
  const out = new Uint8Array(arrays.reduce((n, a) => n + a.length, 0));
  let at = 0;
  for (const a of arrays) {
    out.set(a, at);
    at += a.length;
  }
  return out;
}
