import { describe, expect, it } from 'vitest';
import { daysUntil, formatNumber, formatRange, relativeDays } from './format';

describe('format', () => {
  it('formats ranges as LRV–URV unit, spacing the dash around negatives', () => {
    expect(formatRange(0, 2500, 'mmH2O')).toBe('0–2500 mmH2O');
    expect(formatRange(-250, 250, 'mbar')).toBe('−250 – 250 mbar');
    expect(formatRange(0, 0.75, 'bar')).toBe('0–0.75 bar');
    expect(formatRange(4, 20, 'mA')).toBe('4–20 mA');
    // Pressure unit ids show their label from shared/calc, not the raw id.
    expect(formatRange(0, 100, 'inH2O@68F')).toBe('0–100 inH₂O at 68 °F');
  });

  it('uses a real minus sign and trims trailing zeros', () => {
    expect(formatNumber(-1.5)).toBe('−1.5');
    expect(formatNumber(12.3400)).toBe('12.34');
    expect(formatNumber(Number.NaN)).toBe('—');
  });

  it('counts calendar days to a due date', () => {
    const today = new Date(2025, 2, 10, 15, 30);
    expect(daysUntil('2025-03-10', today)).toBe(0);
    expect(daysUntil('2025-03-14', today)).toBe(4);
    expect(daysUntil('2025-03-01', today)).toBe(-9);
    expect(relativeDays(-9)).toBe('9 days ago');
    expect(relativeDays(4)).toBe('in 4 days');
  });
});
