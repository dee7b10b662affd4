import { describe, expect, it } from 'vitest';
import { hartPointErrors, LOOP_SPAN_MA, withinTrimTolerance } from './hart-errors';

describe('hartPointErrors', () => {
  it('separates the digital error (% of DP span) from the D/A error (mA and % of 16 mA)', () => {
    // 0–100 range, 50 applied, PV reads 50.2: +0.2 % of span; meter 12.05 mA vs device 12.00 mA: +0.05 mA = 0.3125 %.
    const e = hartPointErrors({ appliedDp: 50, digitalPv: 50.2, meterMa: 12.05, deviceMa: 12, lrv: 0, urv: 100 })!;
    expect(e.digitalError).toBeCloseTo(0.2, 12);
    expect(e.digitalErrorPctSpan).toBeCloseTo(0.2, 12);
    expect(e.analogErrorMa).toBeCloseTo(0.05, 12);
    expect(e.analogErrorPctSpan).toBeCloseTo(0.3125, 12);
    expect(LOOP_SPAN_MA).toBe(16);
  });

  it('uses the span magnitude for a reversed range', () => {
    expect(hartPointErrors({ appliedDp: 10, digitalPv: 9, meterMa: 4, deviceMa: 4, lrv: 50, urv: -50 })!.digitalErrorPctSpan).toBeCloseTo(-1, 12);
  });

  it('cannot compute with a zero span or a missing value', () => {
    expect(hartPointErrors({ appliedDp: 1, digitalPv: 1, meterMa: 4, deviceMa: 4, lrv: 5, urv: 5 })).toBeUndefined();
    expect(hartPointErrors({ appliedDp: 1, digitalPv: Number.NaN, meterMa: 4, deviceMa: 4, lrv: 0, urv: 5 })).toBeUndefined();
  });
});

describe('withinTrimTolerance', () => {
  it('is the meter within the tolerance of the fixed current', () => {
    expect(withinTrimTolerance(4.0015, 4, 0.002)).toBe(true);
    expect(withinTrimTolerance(4.05, 4, 0.002)).toBe(false);
    expect(withinTrimTolerance(Number.NaN, 4, 0.002)).toBe(false);
  });
});
