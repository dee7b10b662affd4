/**
 * The client's view of shared/format (numbers, units, dates — one style with the certificate and
 * the mails), with dates bound to the site's time zone. The zone comes with the signed-in user
 * (`/api/auth/me`) and is set once by the session query; until then dates are shown in UTC.
 */
import {
  DEFAULT_TIME_ZONE,
  daysBetween,
  formatDate as formatDateIn,
  formatDateTime as formatDateTimeIn,
  formatTime as formatTimeIn,
  isTimeZone,
  todayInZone,
  type DateTimeOptions,
} from '../../shared/format';

export {
  dpDecimals,
  flowAtDp,
  type FlowInstrument as FlowInstrumentView,
  flowDecimals,
  formatFixed,
  formatFlow,
  formatNominal,
  formatNumber,
  formatRange,
  formatRootDeparture,
  formatSigned,
  MINUS,
  NO_VALUE,
  relativeDays,
  uncertaintyLabel,
  unitLabel,
} from '../../shared/format';

let siteZone = DEFAULT_TIME_ZONE;

/** Set the site's time zone (from the signed-in user's site); an unknown zone leaves UTC. */
export function setSiteTimeZone(zone: string | undefined): void {
  siteZone = zone && isTimeZone(zone) ? zone : DEFAULT_TIME_ZONE;
}

/** The site's time zone in use. */
export function siteTimeZone(): string {
  return siteZone;
}

/** Today's date (YYYY-MM-DD) in the site's zone — the same function the server uses. */
export function siteToday(now: Date = new Date()): string {
  return todayInZone(siteZone, now);
}

/** "2026-12-02": a calendar date as is, an instant as its date in the site's zone. */
export function formatDate(value: string | Date | null | undefined): string {
  return formatDateIn(value, siteZone);
}

/** "2026-12-02 09:36" in the site's zone. */
export function formatDateTime(value: string | Date | number | null | undefined, opts: DateTimeOptions = {}): string {
  return formatDateTimeIn(value, siteZone, opts);
}

/** "09:36" (or "09:36:05") in the site's zone: clocks and chart axes. */
export function formatTime(value: Date | number, seconds = false): string {
  return formatTimeIn(value, siteZone, seconds);
}

/** Whole days from the site's today to a date (YYYY-MM-DD); negative when past. */
export function daysUntil(isoDate: string, today: string = siteToday()): number {
  return daysBetween(today, isoDate);
}

/** The date of a timestamp or date string in the site's zone; "—" when empty. */
export function isoDay(value: string | null | undefined): string {
  return formatDate(value);
}
