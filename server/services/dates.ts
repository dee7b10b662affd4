/**
 * Calendar dates on the server. The rules live in shared/format (one for server and client);
 * this module keeps the server's names. "Today" is the site's today: see site-clock.ts.
 */
export { addDays, daysBetween, dueState, DUE_SOON_DAYS } from '../../shared/format/dates';

/** ISO calendar date (YYYY-MM-DD) of a Date in UTC: for stored instants only; "today" comes from the site clock. */
export const isoDate = (d: Date): string => d.toISOString().slice(0, 10);
