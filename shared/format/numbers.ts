/**
 * Numbers as people read them, one rule for every medium (screens, certificate, mails).
 *
 * Sign rule: a negative value is written with U+2212 MINUS SIGN (−), never the hyphen-minus; a
 * signed value (an error, a departure, a drift) also shows + when positive. The certificate and
 * the mails use the same characters as the screens: the certificate's fonts carry U+2212 (latin
 * subset) and the mails are UTF-8. Machine-readable output (CSV, JSON) keeps plain numbers.
 *
 * Zero rule: a value that rounds to zero at the decimals shown is written without a sign
 * ("0", "0.000"), so "−0", "+0" and "−0.000" never appear.
 */

/** U+2212 MINUS SIGN. */
export const MINUS = '\u2212';

/** Shown where a value is missing or not finite. */
export const NO_VALUE = '—';

function clampDecimals(d: number): number {
  return Math.min(20, Math.max(0, Math.trunc(d)));
}

/** `|value|` rounded to `decimals`, as digits, and whether the rounded value is zero. */
function magnitude(value: number, decimals: number): { digits: string; zero: boolean } {
  const digits = Math.abs(value).toFixed(clampDecimals(decimals));
  return { digits, zero: /^0(\.0*)?$/.test(digits) };
}

/** Options of {@link formatFixed} and {@link formatNumber}. */
export interface NumberOptions {
  /** Show + before a positive value (errors, departures). Default false. */
  signed?: boolean;
}

/**
 * A value with exactly `decimals` decimals: "12.500", "−0.125", "+0.125" (signed), "0.000" for a
 * value that rounds to zero whatever its sign. `—` for null, undefined or a non-finite value.
 */
export function formatFixed(value: number | null | undefined, decimals: number, opts: NumberOptions = {}): string {
  if (value === null || value === undefined || !Number.isFinite(value)) return NO_VALUE;
  const { digits, zero } = magnitude(value, decimals);
  if (zero) return digits;
  if (value < 0) return `${MINUS}${digits}`;
  return opts.signed ? `+${digits}` : digits;
}

/**
 * A value with at most `maxDecimals` decimals and no trailing zeros: "12.5", "−0.125", "0".
 * `—` for null, undefined or a non-finite value.
 */
export function formatNumber(value: number | null | undefined, maxDecimals = 4, opts: NumberOptions = {}): string {
  if (value === null || value === undefined || !Number.isFinite(value)) return NO_VALUE;
  const { digits, zero } = magnitude(value, maxDecimals);
  const trimmed = digits.includes('.') ? digits.replace(/\.?0+$/, '') : digits;
  if (zero) return '0';
  if (value < 0) return `${MINUS}${trimmed}`;
  return opts.signed ? `+${trimmed}` : trimmed;
}

/** {@link formatFixed} with the + sign: errors, hysteresis, departures. */
export function formatSigned(value: number | null | undefined, decimals: number): string {
  return formatFixed(value, decimals, { signed: true });
}

/**
 * Decimals for DP values of an instrument range: the last digit shown steps by the largest power
 * of ten that is not above 0.01 % of the span (a display resolution of 1/10 000 of span, a fifth
 * of the tightest common tolerance of ±0.05 % — common practice), i.e. `4 − floor(log10 span)`,
 * kept within 0–6. Span 100 → 2 (100.00), span 25 → 3, span 2.889 → 4, span 25 000 Pa → 0.
 *
 * Why this rule and not `5 − ceil(log10 span)`: the two agree except when the span is an exact
 * power of ten, where the ceil form adds a digit below the resolution (100 → 100.000); one rule
 * derived from the resolution is used by the screens and the certificate alike.
 */
export function dpDecimals(span: number): number {
  const s = Math.abs(span);
  if (!Number.isFinite(s) || s === 0) return 3;
  return Math.min(6, Math.max(0, 4 - Math.floor(Math.log10(s) + 1e-12)));
}

/** A nominal percentage without trailing zeros: 6.25, 10, 56.25 (three decimals at most). */
export function formatNominal(pct: number): string {
  return formatNumber(pct, 3);
}
