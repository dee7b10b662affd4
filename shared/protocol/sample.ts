/**
 * Plain types shared by every instrument protocol: what a decoded line looks like and why a
 * line could not be decoded.
 */

/** Which bench channel a device feeds: the applied pressure (DP) or the loop current. */
export type DeviceKind = 'pressure' | 'current';

/** One decoded reading, as the driver hands it to the bench hub. */
export interface DecodedSample {
  device: DeviceKind;
  /** The line exactly as received, terminator removed. */
  raw: string;
  /** Value in `unit`, after the profile's scale (current is always in mA). */
  value: number;
  /** Our unit id: `'mA'` for current; a pressure unit id such as `'inH2O@68F'`, `'kPa'`, `'mbar'`. */
  unit: string;
}

/** Why a complete, printable line was rejected by a decoder. */
export type DecodeFailureReason =
  /** The value field is not a decimal number. */
  | 'not-a-number'
  /** The instrument reported overflow or not-a-number (SCPI 9.9E37 / 9.91E37) or a non-finite value. */
  | 'overflow'
  /** The line does not have the shape the protocol expects. */
  | 'no-match'
  /** The line names a unit other than the one configured. */
  | 'wrong-unit';

/** Outcome of decoding one line: a value with its unit, or the reason it was rejected. */
export type DecodeResult =
  | { ok: true; value: number; unit: string }
  | { ok: false; reason: DecodeFailureReason; detail?: string };

/** Counter of decoder rejections by reason, all starting at zero. */
export function emptyRejectCounts(): Record<DecodeFailureReason, number> {
  return { 'not-a-number': 0, overflow: 0, 'no-match': 0, 'wrong-unit': 0 };
}

/**
 * Strict decimal number as IEEE 488.2 §7.7.2 defines it for NR1/NR2/NR3 (sign, digits, optional
 * point, optional exponent); whitespace around it is allowed. Rejects hex, `Infinity`, `NaN`, `1,5`.
 */
const DECIMAL = /^\s*[+-]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?\s*$/;

/** Parses a strict decimal number; `undefined` when the text is not one. */
export function parseDecimal(text: string): number | undefined {
  if (!DECIMAL.test(text)) return undefined;
  const value = Number(text.trim());
  return Number.isFinite(value) ? value : undefined;
}
