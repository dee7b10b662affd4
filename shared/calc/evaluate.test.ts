import { describe, expect, it } from 'vitest';
import { evaluateCalibration, type EvaluateInput } from './evaluate';

const base: EvaluateInput = {
  instrument: { lrv: 0, urv: 100, unit: 'kPa', outputMode: 'sqrt-transmitter', cutoffMode: 'linear', cutoffValue: 0.5, tolerancePctSpan: 0.5 },
  standards: {
    pressure: { kind: 'spec', unit: 'kPa', pctOfReading: 0.02, pctOfFullScale: 0.01, fullScale: 200 },
    current: { pctOfReading: 0.01, floorMa: 0.001, resolutionMa: 0.001 },
  },
  decisionRule: 'non-binary',
  readings: [
    { nominalPct: 10, direction: 'up', appliedDp: 1, measuredMa: 5.6 },
    { nominalPct: 50, direction: 'up', appliedDp: 25, measuredMa: 12.016, measuredMaSd: 0.002, n: 30 },
    { nominalPct: 100, direction: 'up', appliedDp: 100, measuredMa: 20.0 },
    { nominalPct: 50, direction: 'down', appliedDp: 25, measuredMa: 11.992 },
    { nominalPct: 10, direction: 'down', appliedDp: 1, measuredMa: 5.69 },
  ],
};

describe('evaluateCalibration', () => {
  it('per-point results, hysteresis, non-linearity and overall decision', () => {
    const r = evaluateCalibration(base);
    if (!r.ok) throw new Error(r.reason);
    const v = r.value;
    expect(v.points).toHaveLength(5);
    const p1 = v.points[1]!;
    expect(p1.basis).toBe('flow');
    expect(p1.appliedFlowPct).toBeCloseTo(50, 12);
    expect(p1.expectedMa).toBeCloseTo(12, 12);
    expect(p1.errorPctSpan).toBeCloseTo(0.1, 10);
    expect(p1.decision).toBe('pass');
    expect(p1.tur).toBeGreaterThan(4);
    expect(p1.effectiveDof).toBeGreaterThan(29);
    expect(v.points[0]!.effectiveDof).toBeNull(); // Type B only → infinite
    expect(p1.conformanceProbability).toBeGreaterThan(0.99);
    // 5.69 mA at 1 % DP: error (5.69 − 5.6)/16 = 0.5625 % > 0.5 % → beyond the limit
    expect(v.points[4]!.errorPctSpan).toBeCloseTo(0.5625, 10);
    expect(v.points[4]!.decision).toBe('conditional-fail');
    expect(v.overallDecision).toBe('conditional-fail');
    expect(v.worstError).toEqual({ index: 4, errorPctSpan: v.points[4]!.errorPctSpan });
    expect(v.hysteresis.map((h) => h.nominalPct)).toEqual([10, 50]);
    expect(v.maxHysteresisPctSpan).toBeCloseTo(0.5625, 10);
    expect(v.nonLinearity).not.toBeNull();
    expect(JSON.parse(JSON.stringify(v))).toEqual(v); // JSON-friendly
  });
  it('simple acceptance passes a point just inside the limit; an NE 43 failure current fails', () => {
    const r = evaluateCalibration({
      ...base,
      decisionRule: 'simple',
      readings: [
        { nominalPct: 50, direction: 'up', appliedDp: 25, measuredMa: 12.0799 },
        { nominalPct: 100, direction: 'up', appliedDp: 100, measuredMa: 21.5 },
      ],
    });
    if (!r.ok) throw new Error(r.reason);
    expect(r.value.points[0]!.decision).toBe('pass');
    expect(r.value.points[1]!.decision).toBe('fail');
    expect(r.value.points[1]!.ne43).toBe('failure-high');
  });
  it('rejects input it cannot compute from', () => {
    expect(evaluateCalibration({ ...base, readings: [] }).ok).toBe(false);
    expect(evaluateCalibration({ ...base, instrument: { ...base.instrument, urv: 0 } }).ok).toBe(false);
    expect(evaluateCalibration({ ...base, instrument: { ...base.instrument, cutoffMode: 'clamp', cutoffValue: undefined } }).ok).toBe(false);
    expect(evaluateCalibration({ ...base, instrument: { ...base.instrument, unit: 'inH2O' as never } }).ok).toBe(false);
  });
});
