import { z } from 'zod';

/**
 * Calendar dates as the API takes them: `YYYY-MM-DD`, a day that exists in the Gregorian calendar
 * (no 31 February, no 29 February outside leap years, no year 0000), within plausible bounds.
 * One schema family, used by every route that takes a date and by the CSV import, so a dry run
 * and its confirmation always agree.
 */

/** Earliest date taken anywhere (older records are not plausible calibration data). */
export const MIN_DATE = '1900-01-01';
/**
 * Furthest ahead a due date may lie, days (about 10 years; our own site-wide maximum: a due date
 * beyond it is a typing error, and `9999-12-31` would mean "never expires").
 */
export const MAX_DUE_DAYS_AHEAD = 3653;
/** Slack for "not in the future" checks, days: a client a time zone ahead may already be on tomorrow. */
const TODAY_SLACK_DAYS = 1;

const SHAPE = /^(\d{4})-(\d{2})-(\d{2})$/;
const DAY_MS = 86_400_000;

/** True when `s` is `YYYY-MM-DD` naming a day that exists (proleptic Gregorian calendar). */
export function isRealDate(s: string): boolean {
  const m = SHAPE.exec(s);
  if (!m) return false;
  const [y, mo, d] = [Number(m[1]), Number(m[2]), Number(m[3])];
  if (y < 1 || mo < 1 || mo > 12 || d < 1) return false;
  const leap = (y % 4 === 0 && y % 100 !== 0) || y % 400 === 0;
  const days = [31, leap ? 29 : 28, 31, 30, 31, 30, 31, 31, 30, 31, 30, 31][mo - 1]!;
  return d <= days;
}

/** Today (UTC) shifted by whole days, as YYYY-MM-DD. */
function dayFromToday(days: number, now = Date.now()): string {
  return new Date(now + days * DAY_MS).toISOString().slice(0, 10);
}

/** Any real date from {@link MIN_DATE} on (no upper bound: use {@link PastDateSchema} or {@link DueDateSchema}). */
export const IsoDateSchema = z
  .string({ message: 'Enter a date' })
  .trim()
  .min(1, { message: 'Enter a date', abort: true })
  .regex(SHAPE, { message: 'Use YYYY-MM-DD', abort: true })
  .refine(isRealDate, { message: 'No such date', abort: true })
  .refine((s) => s >= MIN_DATE, { message: `Dates before ${MIN_DATE} are not taken`, abort: true });

/** A day that has happened (e.g. "last calibrated", "calibrated on"): no later than today. */
export const PastDateSchema = IsoDateSchema.refine((s) => s <= dayFromToday(TODAY_SLACK_DAYS), { message: 'This date is in the future' });

/** A due date: a real date no further ahead than {@link MAX_DUE_DAYS_AHEAD} (it may be past: overdue). */
export const DueDateSchema = IsoDateSchema.refine((s) => s <= dayFromToday(MAX_DUE_DAYS_AHEAD), {
  message: `Dates more than ${Math.round(MAX_DUE_DAYS_AHEAD / 365.25)} years ahead are not taken`,
});
