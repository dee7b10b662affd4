import { afterEach, describe, expect, it } from 'vitest';
import { daysUntil, formatDate, formatDateTime, formatNumber, formatRange, relativeDays, setSiteTimeZone, siteTimeZone, siteToday } from './format';

afterEach(() => setSiteTimeZone(undefined));

describe('format (client view of shared/format)', () => {
  it('formats ranges as LRV–URV unit, spacing the dash around negatives, in the one unit spelling', () => {
    expect(formatRange(0, 2500, 'mmH2O@68F')).toBe('0–2500 mmH2O at 68 °F');
    expect(formatRange(-250, 250, 'mbar')).toBe('−250 – 250 mbar');
    expect(formatRange(0, 0.75, 'bar')).toBe('0–0.75 bar');
    expect(formatRange(4, 20, 'mA')).toBe('4–20 mA');
    expect(formatRange(0, 100, 'inH2O@68F')).toBe('0–100 inH2O at 68 °F');
  });

  it('uses a real minus sign, trims trailing zeros and never writes −0', () => {
    expect(formatNumber(-1.5)).toBe('−1.5');
    expect(formatNumber(12.34)).toBe('12.34');
    expect(formatNumber(-0.00001, 3)).toBe('0');
    expect(formatNumber(Number.NaN)).toBe('—');
  });

  it('counts calendar days from the site’s today', () => {
    expect(daysUntil('2025-03-10', '2025-03-10')).toBe(0);
    expect(daysUntil('2025-03-14', '2025-03-10')).toBe(4);
    expect(daysUntil('2025-03-01', '2025-03-10')).toBe(-9);
    expect(relativeDays(-9)).toBe('9 days ago');
    expect(relativeDays(4)).toBe('in 4 days');
  });

  it('shows dates and takes today in the site zone set from the session', () => {
    const late = new Date('2026-12-02T23:30:00Z');
    expect(siteTimeZone()).toBe('UTC');
    expect(siteToday(late)).toBe('2026-12-02');
    setSiteTimeZone('Pacific/Auckland');
    expect(siteToday(late)).toBe('2026-12-03');
    expect(formatDate('2026-12-02T23:30:00Z')).toBe('2026-12-03');
    expect(formatDateTime('2026-12-02T23:30:00Z')).toBe('2026-12-03 12:30');
    setSiteTimeZone('Not/AZone');
    expect(siteTimeZone()).toBe('UTC');
  });
});
