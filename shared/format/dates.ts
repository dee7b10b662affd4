/**
 * Dates and times in one style, in the site's time zone (an IANA zone name, a site setting).
 *
 * Style: ISO 8601 calendar dates ("2026-12-02") and 24-hour times ("2026-12-02 09:36"), read the
 * same way in every country — no day/month order to guess on a certificate. Where a time leaves
 * the site (certificate, mails) its UTC offset is stated ("2026-12-02 09:36 UTC+1").
 *
 * "Today" is the calendar date in the site's zone, computed by the same function on the server
 * and in the browser, so both agree whether a standard is expired, even near midnight.
 */
import { MINUS } from './numbers';

/** Zone used when a site has not set one. */
export const DEFAULT_TIME_ZONE = 'UTC';

const DAY_MS = 86_400_000;

const formatters = new Map<string, Intl.DateTimeFormat>();
function partsFormatter(zone: string): Intl.DateTimeFormat {
  let f = formatters.get(zone);
  if (!f) {
    f = new Intl.DateTimeFormat('en-GB', {
      timeZone: zone,
      year: 'numeric',
      month: '2-digit',
      day: '2-digit',
      hour: '2-digit',
      minute: '2-digit',
      second: '2-digit',
      hourCycle: 'h23',
    });
    formatters.set(zone, f);
  }
  return f;
}

/** True when `zone` is an IANA time zone name this runtime knows. */
export function isTimeZone(zone: string): boolean {
  if (!zone) return false;
  try {
    new Intl.DateTimeFormat('en-GB', { timeZone: zone });
    return true;
  } catch {
    return false;
  }
}

/** Calendar fields of an instant in a zone. */
export interface ZonedParts {
  year: number;
  month: number;
  day: number;
  hour: number;
  minute: number;
  second: number;
}

function toInstant(at: Date | string | number): Date | undefined {
  const d = at instanceof Date ? at : new Date(at);
  return Number.isNaN(d.getTime()) ? undefined : d;
}

/** Wall-clock fields of `at` in `zone` (falls back to UTC for an unknown zone). */
export function zonedParts(at: Date, zone: string): ZonedParts {
  const z = isTimeZone(zone) ? zone : DEFAULT_TIME_ZONE;
  const get: Record<string, number> = {};
  for (const p of partsFormatter(z).formatToParts(at)) if (p.type !== 'literal') get[p.type] = Number(p.value);
  return { year: get.year!, month: get.month!, day: get.day!, hour: get.hour! % 24, minute: get.minute!, second: get.second! };
}

const pad = (n: number, w = 2) => String(n).padStart(w, '0');

/** Offset of `zone` from UTC at `at`, minutes (east positive). */
export function zoneOffsetMinutes(at: Date, zone: string): number {
  const p = zonedParts(at, zone);
  const asUtc = Date.UTC(p.year, p.month - 1, p.day, p.hour, p.minute, p.second);
  return Math.round((asUtc - Math.floor(at.getTime() / 1000) * 1000) / 60_000);
}

/** "UTC", "UTC+1", "UTC−5", "UTC+5:30". */
export function formatOffset(minutes: number): string {
  if (minutes === 0) return 'UTC';
  const sign = minutes < 0 ? MINUS : '+';
  const m = Math.abs(minutes);
  return `UTC${sign}${Math.floor(m / 60)}${m % 60 ? `:${pad(m % 60)}` : ''}`;
}

/** The calendar date (YYYY-MM-DD) of an instant in a zone. */
export function dateInZone(at: Date | string | number, zone: string): string {
  const d = toInstant(at);
  if (!d) return '';
  const p = zonedParts(d, zone);
  return `${pad(p.year, 4)}-${pad(p.month)}-${pad(p.day)}`;
}

/** Today's date (YYYY-MM-DD) in the site's zone. Server and client both call this. */
export function todayInZone(zone: string, now: Date = new Date()): string {
  return dateInZone(now, zone);
}

/**
 * A date for display: "2026-12-02". Takes a calendar date (returned as is) or an instant (its
 * date in `zone`). `—` for an empty or unreadable value.
 */
export function formatDate(value: string | Date | null | undefined, zone: string = DEFAULT_TIME_ZONE): string {
  if (value === null || value === undefined || value === '') return '—';
  if (typeof value === 'string' && /^\d{4}-\d{2}-\d{2}$/.test(value)) return value;
  return dateInZone(value, zone) || '—';
}

/** Options of {@link formatDateTime}. */
export interface DateTimeOptions {
  /** Append the UTC offset ("UTC+1"): on the certificate and in mails. Default false. */
  withZone?: boolean;
  /** Include seconds. Default false. */
  seconds?: boolean;
}

/** An instant for display in the site's zone: "2026-12-02 09:36" (optionally "… UTC+1"). `—` when empty or unreadable. */
export function formatDateTime(value: string | Date | number | null | undefined, zone: string = DEFAULT_TIME_ZONE, opts: DateTimeOptions = {}): string {
  if (value === null || value === undefined || value === '') return '—';
  const d = toInstant(value);
  if (!d) return '—';
  const z = isTimeZone(zone) ? zone : DEFAULT_TIME_ZONE;
  const p = zonedParts(d, z);
  const time = `${pad(p.hour)}:${pad(p.minute)}${opts.seconds ? `:${pad(p.second)}` : ''}`;
  const s = `${pad(p.year, 4)}-${pad(p.month)}-${pad(p.day)} ${time}`;
  return opts.withZone ? `${s} ${formatOffset(zoneOffsetMinutes(d, z))}` : s;
}

/** A time of day in the zone: "09:36" (or "09:36:05"), for chart axes and clocks. */
export function formatTime(value: Date | number, zone: string = DEFAULT_TIME_ZONE, seconds = false): string {
  const d = toInstant(value);
  if (!d) return '—';
  const p = zonedParts(d, zone);
  return `${pad(p.hour)}:${pad(p.minute)}${seconds ? `:${pad(p.second)}` : ''}`;
}

/** Adds whole days to a calendar date (YYYY-MM-DD). */
export function addDays(iso: string, days: number): string {
  const d = new Date(`${iso.slice(0, 10)}T00:00:00Z`);
  d.setUTCDate(d.getUTCDate() + days);
  return d.toISOString().slice(0, 10);
}

/** Whole calendar days from date a to date b (b − a), both YYYY-MM-DD. */
export function daysBetween(a: string, b: string): number {
  return Math.round((Date.parse(`${b.slice(0, 10)}T00:00:00Z`) - Date.parse(`${a.slice(0, 10)}T00:00:00Z`)) / DAY_MS);
}

/** Days before a due date at which a standard counts as due soon (site practice, common practice). */
export const DUE_SOON_DAYS = 30;

/** Due state of a standard on `today` (both YYYY-MM-DD, today in the site's zone): expired after its due date. */
export function dueState(dueOn: string, today: string): 'in-date' | 'due-soon' | 'expired' {
  if (dueOn < today) return 'expired';
  return daysBetween(today, dueOn) <= DUE_SOON_DAYS ? 'due-soon' : 'in-date';
}

/** "today", "tomorrow", "in 3 days", "5 days ago". */
export function relativeDays(days: number): string {
  if (days === 0) return 'today';
  if (days === 1) return 'tomorrow';
  if (days === -1) return 'yesterday';
  return days > 0 ? `in ${days} days` : `${-days} days ago`;
}
