/** ISO calendar date (YYYY-MM-DD) of a Date, in UTC. */
export const isoDate = (d: Date): string => d.toISOString().slice(0, 10);

/** Adds whole days to an ISO date. */
export function addDays(iso: string, days: number): string {
  const d = new Date(`${iso}T00:00:00Z`);
  d.setUTCDate(d.getUTCDate() + days);
  return isoDate(d);
}

/** Whole days from a to b (b − a). */
export function daysBetween(a: string, b: string): number {
  return Math.round((Date.parse(`${b}T00:00:00Z`) - Date.parse(`${a}T00:00:00Z`)) / 86_400_000);
}

/** Days before a due date at which a standard counts as due soon (site practice). */
export const DUE_SOON_DAYS = 30;

export function dueState(dueOn: string, today: string): 'in-date' | 'due-soon' | 'expired' {
  if (dueOn < today) return 'expired';
  return daysBetween(today, dueOn) <= DUE_SOON_DAYS ? 'due-soon' : 'in-date';
}
