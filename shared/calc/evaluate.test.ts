import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { DECISION_RULES } from './decision';
import { evaluateCalibration, type EvaluateInput } from './evaluate';
import { pointFlow } from './orifice';
import { studentTQuantile } from './student-t';

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
    // Hysteresis = error up − error down at the same nominal (REFERENCE.md): 10 %: 0 − 0.5625.
    expect(v.hysteresis[0]!.hysteresisPctSpan).toBeCloseTo(-0.5625, 10);
    expect(v.maxHysteresisPctSpan).toBeCloseTo(0.5625, 10);
    expect(v.errorBasis).toBe('flow-span');
    expect(p1.coverageFactor).toBeCloseTo(studentTQuantile(0.9545, p1.effectiveDof!), 12);
    expect(v.points[0]!.coverageFactor).toBeCloseTo(2, 9); // ν_eff = ∞
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
  it('issue 12 example: few readings dominate, k = t_95.45(ν_eff ≈ 2.02) ≈ 4.49, not 2', () => {
    // Square-root transmitter 0–2.88918 ftH2O@4C, tolerance ±0.8 %, simple acceptance, 75 % flow
    // down, n = 2 with measuredMaSd 0.00337 mA and appliedDpSd 0.0011697 ftH2O. The issue does not
    // state the standards; these (meter 0.004 % of reading + 0.0004 mA, reference U = 0.0002
    // ftH2O at k = 2) give its ν_eff = 2.016. Expected from the issue (checked there against
    // Student's t, JCGM 100:2008 G.3–G.4 and Table G.2): U ≈ 0.110 % span, TUR ≈ 7.2; with k = 2
    // the same budget gives U 0.0492 % and TUR 16.3.
    const example: EvaluateInput = {
      instrument: { lrv: 0, urv: 2.88918, unit: 'ftH2O@4C', outputMode: 'sqrt-transmitter', tolerancePctSpan: 0.8 },
      standards: { pressure: { kind: 'certificate', unit: 'ftH2O@4C', expandedU: 0.0002, k: 2 }, current: { pctOfReading: 0.004, floorMa: 0.0004 } },
      decisionRule: 'simple',
      readings: [{ nominalPct: 75, direction: 'down', appliedDp: 2.88918 * 0.5625, measuredMa: 16, n: 2, measuredMaSd: 0.00337, appliedDpSd: 0.0011697 }],
    };
    const r = evaluateCalibration(example);
    if (!r.ok) throw new Error(r.reason);
    const p = r.value.points[0]!;
    expect(p.effectiveDof).toBeCloseTo(2.016, 2);
    expect(p.coverageFactor).toBeCloseTo(4.49, 2);
    expect(p.coverageProbability).toBe(0.9545);
    expect(Math.abs(p.expandedUncertaintyPctSpan! - 0.11)).toBeLessThan(0.001);
    expect(p.tur).toBeCloseTo(7.2, 1);
    const fixed = evaluateCalibration({ ...example, coverageFactor: 2 });
    if (!fixed.ok) throw new Error(fixed.reason);
    expect(fixed.value.points[0]!.expandedUncertaintyPctSpan).toBeCloseTo(0.0492, 3);
    expect(fixed.value.points[0]!.tur).toBeCloseTo(16.3, 0);
    expect(fixed.value.points[0]!.coverageProbability).toBeNull();
  });

  it('a guard-banded rule says undecided (never simple acceptance) when U cannot be computed', () => {
    // 0 % DP on a pure root: the sensitivity, hence U, cannot be computed.
    for (const decisionRule of ['guard-band', 'non-binary', 'managed-guard-band'] as const) {
      const r = evaluateCalibration({
        ...base,
        instrument: { ...base.instrument, cutoffMode: 'none' },
        decisionRule,
        readings: [{ nominalPct: 0, direction: 'up', appliedDp: 0, measuredMa: 4.0 }],
      });
      if (!r.ok) throw new Error(r.reason);
      expect(r.value.points[0]!.expandedUncertaintyPctSpan).toBeNull();
      expect(r.value.points[0]!.decision).toBe('undecided');
      expect(r.value.points[0]!.undecided?.reason).toBe('uncertainty-unknown');
      expect(r.value.overallDecision).toBe('undecided');
    }
  });

  it('a current in an NE 43 undefined band is undecided (reading out of range); TUR below the site minimum is undecided', () => {
    const r = evaluateCalibration({ ...base, decisionRule: 'simple', readings: [{ nominalPct: 100, direction: 'up', appliedDp: 100, measuredMa: 20.7 }] });
    if (!r.ok) throw new Error(r.reason);
    expect(r.value.points[0]!.decision).toBe('undecided');
    expect(r.value.points[0]!.undecided?.reason).toBe('reading-out-of-range');
    const t = evaluateCalibration({ ...base, minimumTur: 1000 });
    if (!t.ok) throw new Error(t.reason);
    expect(t.value.points.every((p) => p.decision === 'undecided' && p.undecided?.reason === 'tur-below-minimum')).toBe(true);
  });

  it('property: U is never below the resolution term of the current meter', () => {
    fc.assert(
      fc.property(
        fc.constantFrom(...DECISION_RULES),
        fc.double({ min: 0.0001, max: 0.01, noNaN: true }),
        fc.double({ min: 5, max: 100, noNaN: true }),
        fc.double({ min: 0, max: 0.01, noNaN: true }),
        fc.integer({ min: 2, max: 1000 }),
        (decisionRule, resolutionMa, dpPct, sd, n) => {
          const r = evaluateCalibration({
            ...base,
            decisionRule,
            standards: { ...base.standards, current: { pctOfReading: 0, floorMa: 0, resolutionMa } },
            readings: [{ nominalPct: Math.sqrt(dpPct) * 10, direction: 'up', appliedDp: dpPct, measuredMa: 4 + 16 * Math.sqrt(dpPct / 100), measuredMaSd: sd, n }],
          });
          if (!r.ok) throw new Error(r.reason);
          const U = r.value.points[0]!.expandedUncertaintyMa!;
          expect(U).toBeGreaterThanOrEqual(resolutionMa / (2 * Math.sqrt(3)));
        },
      ),
    );
  });

  it('orifice primary element: each point carries the ISO 5167-2 flow in the site unit; a linear output none', () => {
    const pe = { spec: { D: 0.1, d: 0.05, taps: 'corner' as const, rho: 998.2, mu: 0.001 }, flowUnit: 'm3/h' as const };
    const r = evaluateCalibration({ ...base, instrument: { ...base.instrument, primaryElement: pe } });
    if (!r.ok) throw new Error(r.reason);
    const p100 = r.value.points[2]!;
    // 100 kPa at URV = 100 000 Pa.
    expect(p100.flow!.flow).toBeCloseTo(pointFlow(pe.spec, 100_000, 100_000, 'm3/h')!.flow, 9);
    expect(p100.flow!.unit).toBe('m3/h');
    expect(r.value.points[0]!.flow!.pureRootDeparturePct!).toBeLessThan(0);
    const lin = evaluateCalibration({ ...base, instrument: { ...base.instrument, outputMode: 'linear', primaryElement: pe } });
    if (!lin.ok) throw new Error(lin.reason);
    expect(lin.value.points[0]!.flow).toBeNull();
  });

  it('rejects input it cannot compute from', () => {
    expect(evaluateCalibration({ ...base, readings: [] }).ok).toBe(false);
    expect(evaluateCalibration({ ...base, instrument: { ...base.instrument, urv: 0 } }).ok).toBe(false);
    expect(evaluateCalibration({ ...base, instrument: { ...base.instrument, cutoffMode: 'clamp', cutoffValue: undefined } }).ok).toBe(false);
    expect(evaluateCalibration({ ...base, instrument: { ...base.instrument, unit: 'inH2O' as never } }).ok).toBe(false);
  });
});
