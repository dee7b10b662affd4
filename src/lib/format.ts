import { isPressureUnitId, PRESSURE_UNIT_LABELS } from '../../shared/calc/units';

/** Display helpers. Numbers are returned as strings for a `num` element. */

const DAY_MS = 86_400_000;

/** A value with up to `maxDecimals` decimals and no trailing zeros, using a real minus sign. */
export function formatNumber(value: number, maxDecimals = 4): string {
  if (!Number.isFinite(value)) return '—';
  const s = value.toLocaleString('en-GB', { maximumFractionDigits: maxDecimals, useGrouping: false });
  return s.replace(/^-/, '−');
}

/** "LRV–URV unit", e.g. "0–2500 mmH2O"; spaced ("−250 – 250 mbar") when a bound is negative, so the dash is not read as a minus. */
export function formatRange(lrv: number, urv: number, unit: string): string {
  const sep = lrv < 0 || urv < 0 ? ' – ' : '–';
  return `${formatNumber(lrv)}${sep}${formatNumber(urv)} ${unitLabel(unit)}`;
}

/**
 * Short display label of a unit id: pressure ids from shared/calc ("inH2O@68F" → "inH₂O at 68 °F",
 * the parenthesised conversion dropped); other units as given.
 */
export function unitLabel(unit: string): string {
  return isPressureUnitId(unit) ? PRESSURE_UNIT_LABELS[unit].replace(/\s*\([^)]*\)$/, '') : unit;
}

/** Whole days from today (local) to an ISO date (YYYY-MM-DD); negative when past. */
export function daysUntil(isoDate: string, today: Date = new Date()): number {
  const [y, m, d] = isoDate.slice(0, 10).split('-').map(Number);
  const target = Date.UTC(y ?? 1970, (m ?? 1) - 1, d ?? 1);
  const now = Date.UTC(today.getFullYear(), today.getMonth(), today.getDate());
  return Math.round((target - now) / DAY_MS);
}

/** "today", "in 3 days", "5 days ago". */
export function relativeDays(days: number): string {
  if (days === 0) return 'today';
  if (days === 1) return 'tomorrow';
  if (days === -1) return 'yesterday';
  return days > 0 ? `in ${days} days` : `${-days} days ago`;
}

/** ISO date part of a timestamp or date string. */
export function isoDay(value: string | null | undefined): string {
  return value ? value.slice(0, 10) : '—';
}
