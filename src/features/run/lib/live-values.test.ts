import { describe, expect, it } from 'vitest';
import { approachWords, liveValues, nominalWords, transferSpecOf } from './live-values';

const ft101 = { lrv: 0, urv: 100, unit: 'inH2O@68F', outputMode: 'sqrt-transmitter' as const, cutoffMode: 'clamp' as const, cutoffValue: 6, tolerancePct: 0.5 };

describe('liveValues', () => {
  it('gives applied flow, expected mA and error for a rooted output (practice: 25 % DP → 50 % flow → 12 mA)', () => {
    const v = liveValues(transferSpecOf(ft101), 25, 'inH2O@68F', 12.08);
    expect(v.dpPct).toBeCloseTo(25, 9);
    expect(v.flowPct).toBeCloseTo(50, 9);
    expect(v.expectedMa).toBeCloseTo(12, 9);
    expect(v.errorPctSpan).toBeCloseTo(0.5, 9);
    expect(v.ne43).toBe('measurement');
  });

  it('converts the calibrator unit to the instrument unit and says when it cannot', () => {
    const spec = transferSpecOf({ ...ft101, outputMode: 'linear', cutoffMode: 'none', unit: 'kPa' });
    const v = liveValues(spec, 50_000, 'Pa', 12);
    expect(v.appliedDp).toBeCloseTo(50, 9);
    expect(v.flowPct).toBeNull();
    expect(v.expectedMa).toBeCloseTo(12, 9);
    expect(liveValues(spec, 1, 'furlongs', 12).unitProblem).toMatch(/cannot be converted/);
  });

  it('flags a failure current (NE 43)', () => {
    expect(liveValues(transferSpecOf(ft101), 0, 'inH2O@68F', 3.5).ne43).toBe('failure-low');
  });

  it('words the point and its approach', () => {
    expect(nominalWords({ nominalPct: 10, basis: 'flow' })).toBe('10 % flow');
    expect(nominalWords({ nominalPct: 6.25, basis: 'dp' })).toBe('6.25 % DP');
    expect(approachWords('up')).toBe('approach from below');
    expect(approachWords('down')).toBe('approach from above');
  });
});
