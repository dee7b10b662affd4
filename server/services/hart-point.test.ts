import { describe, expect, it } from 'vitest';
import { hartPointOf } from './hart-point';

const ctx = { unit: 'inH2O@68F', lrv: 0, urv: 100 };
const capture = { startMs: 1000, endMs: 3000, appliedDp: 50, measuredMa: 12.05 };

describe('hartPointOf', () => {
  it('averages the command 3 readings inside the hold window', () => {
    const readings = [
      { at: 500, pv: 10, pvUnitCode: 1, loopMa: 5 },
      { at: 1500, pv: 50.1, pvUnitCode: 1, loopMa: 12.0 },
      { at: 2500, pv: 50.3, pvUnitCode: 1, loopMa: 12.02 },
    ];
    const h = hartPointOf(readings, capture, ctx)!;
    expect(h.n).toBe(2);
    expect(h.pv).toBeCloseTo(50.2, 12);
    expect(h.loopMa).toBeCloseTo(12.01, 12);
    expect(h.digitalErrorPctSpan).toBeCloseTo(0.2, 9);
    expect(h.analogErrorMa).toBeCloseTo(0.04, 9);
  });

  it('takes the last reading shortly before the end when the window holds none, and converts the unit', () => {
    // 12.4323 kPa is 50 inH2O at 68 °F (1 inH2O@68F = 248.646 Pa, from memory).
    const h = hartPointOf([{ at: 1800, pv: 12.4323, pvUnitCode: 12, loopMa: 12 }], { ...capture, startMs: 2000 }, ctx)!;
    expect(h.n).toBe(1);
    expect(h.pv).toBeCloseTo(50, 2);
  });

  it('gives nothing without a reading near the hold or with a unit it cannot convert', () => {
    expect(hartPointOf([{ at: 100, pv: 50, pvUnitCode: 1, loopMa: 12 }], capture, ctx)).toBeUndefined();
    expect(hartPointOf([{ at: 2000, pv: 50, pvUnitCode: 57, loopMa: 12 }], capture, ctx)).toBeUndefined();
  });
});
