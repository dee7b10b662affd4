import { z } from 'zod';
import { isPressureUnitId, PA_PER_UNIT } from '../calc';

/**
 * Bounds on range values so a span can neither overflow nor vanish. Largest pressure taken:
 * 1 GPa (far above any process pressure transmitter; common practice, from memory). Smallest
 * span: 1 Pa (the smallest DP transmitter spans are tens of pascals; common practice, from
 * memory). Other units (mA for current standards): magnitudes up to 1e6 and spans from 1e-6.
 */
export const MAX_PRESSURE_PA = 1e9;
export const MIN_SPAN_PA = 1;
const MAX_OTHER = 1e6;
const MIN_SPAN_OTHER = 1e-6;

/** Problems with a range [lo, hi] in `unit`, as field → message ('' when fine). */
export function rangeProblems(lo: number, hi: number, unit: string): { lo?: string; hi?: string; span?: string } {
  const pa = isPressureUnitId(unit) ? PA_PER_UNIT[unit] : undefined;
  const max = pa ? MAX_PRESSURE_PA / pa : MAX_OTHER;
  const minSpan = pa ? MIN_SPAN_PA / pa : MIN_SPAN_OTHER;
  const out: { lo?: string; hi?: string; span?: string } = {};
  const fmt = (v: number) => Number(v.toPrecision(3)).toString();
  if (!(Math.abs(lo) <= max)) out.lo = `Beyond ±${fmt(max)} ${unit}`;
  if (!(Math.abs(hi) <= max)) out.hi = `Beyond ±${fmt(max)} ${unit}`;
  if (!out.lo && !out.hi && Math.abs(hi - lo) < minSpan) out.span = `The span must be at least ${fmt(minSpan)} ${unit}`;
  return out;
}

/**
 * A non-negative whole number written in plain decimal digits (a path index, a revision): `0x1`,
 * `1e0`, ` 1`, `+1` and `1.0` are refused, where `z.coerce.number()` would take them.
 */
export const decimalIndex = (label: string, min: number, max: number) =>
  z
    .string()
    .regex(/^(0|[1-9]\d{0,8})$/, `${label} must be a whole number in decimal digits`)
    .transform(Number)
    .pipe(z.number().int().min(min, `${label} must be at least ${min}`).max(max, `${label} is too large`));

/**
 * A finite number field whose messages read in plain words: "Enter the LRV as a number" when the
 * box is empty or not a number (the form passes NaN for an empty number box). Bounds take their
 * own messages, so a value out of range never reads as "not a number".
 */
export const numberField = (label: string) =>
  z.number({ error: (iss) => (iss.code === 'invalid_type' ? `Enter the ${label} as a number` : undefined) }).finite(`Enter the ${label} as a finite number`);

/** A text field's "too long" message in plain words. */
export const atMost = (n: number) => `Keep this to ${n} characters or fewer`;

/**
 * Options for an object refinement that must run even when other fields have errors (zod skips
 * object refinements after a type error anywhere, so the form would show errors one at a time):
 * it runs whenever the fields it reads are themselves valid.
 */
export const whenValid = (...keys: string[]) => ({
  when: (payload: { issues: ReadonlyArray<{ path?: ReadonlyArray<PropertyKey> | undefined }> }) => !payload.issues.some((i) => keys.includes(String(i.path?.[0]))),
});
