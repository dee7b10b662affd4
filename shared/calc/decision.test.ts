import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { DECISION_RULES, applyDecisionRule, conformanceProbability, dobbertMultiplier, testUncertaintyRatio, worstDecision } from './decision';

describe('TUR (ANSI/NCSL Z540.3 §3.11)', () => {
  it('(T_U − T_L)/(2·U95)', () => {
    expect(testUncertaintyRatio(-1, 1, 0.25)).toBe(4); // 2/(2×0.25)
    expect(testUncertaintyRatio(-0.25, 0.25, 0.0390845)).toBeCloseTo(6.3964, 4);
    expect(testUncertaintyRatio(-1, 1, 0)).toBeUndefined();
  });
});

describe('decision rules (ILAC-G8:09/2019)', () => {
  const T = 1;
  const U = 0.2;
  it('simple acceptance (w = 0)', () => {
    expect(applyDecisionRule('simple', 1, -T, T, U).decision).toBe('pass');
    expect(applyDecisionRule('simple', -1, -T, T, U).decision).toBe('pass');
    expect(applyDecisionRule('simple', 1.0001, -T, T, U).decision).toBe('fail');
  });
  it('guard band w = U', () => {
    expect(applyDecisionRule('guard-band', 0.8, -T, T, U).decision).toBe('pass');
    expect(applyDecisionRule('guard-band', 0.8001, -T, T, U).decision).toBe('fail');
    expect(applyDecisionRule('guard-band', -0.8001, -T, T, U).decision).toBe('fail');
    expect(applyDecisionRule('guard-band', 0.5, -T, T, U).acceptanceUpper).toBeCloseTo(0.8, 15);
  });
  it('non-binary four states', () => {
    const d = (y: number) => applyDecisionRule('non-binary', y, -T, T, U).decision;
    expect(d(0.8)).toBe('pass');
    expect(d(0.8001)).toBe('conditional-pass');
    expect(d(1)).toBe('conditional-pass');
    expect(d(1.0001)).toBe('conditional-fail');
    expect(d(1.2)).toBe('conditional-fail');
    expect(d(1.2001)).toBe('fail');
    expect(d(-1.1)).toBe('conditional-fail');
    expect(d(-0.9)).toBe('conditional-pass');
  });
  it('managed guard band (Z540.3 Handbook method 6, Dobbert)', () => {
    // TUR = 2: M = 1.04 − exp(0.38·ln 2 − 0.54) = 1.04 − exp(−0.276610) = 1.04 − 0.758350 = 0.281650
    expect(dobbertMultiplier(2)).toBeCloseTo(1.04 - Math.exp(0.38 * Math.log(2) - 0.54), 15);
    expect(dobbertMultiplier(2)).toBeCloseTo(0.28165, 4);
    // M reaches 0 at TUR = exp((0.54 + ln 1.04)/0.38) ≈ 4.59
    const t0 = Math.exp((0.54 + Math.log(1.04)) / 0.38);
    expect(t0).toBeCloseTo(4.5916, 3);
    expect(dobbertMultiplier(t0 * 1.001)).toBe(0);
    expect(dobbertMultiplier(t0 * 0.99)).toBeGreaterThan(0);
    // T = ±1, U95 = 0.5 → TUR 2 → A = 1 − 0.5 × 0.28165 = 0.859175
    const r = applyDecisionRule('managed-guard-band', 0.85, -1, 1, 0.5);
    expect(r.acceptanceUpper).toBeCloseTo(0.859175, 5);
    expect(r.decision).toBe('pass');
    expect(applyDecisionRule('managed-guard-band', 0.86, -1, 1, 0.5).decision).toBe('fail');
    // TUR 5 ≥ 4.59: no guard band, A = T
    expect(applyDecisionRule('managed-guard-band', 1, -1, 1, 0.2).decision).toBe('pass');
  });
  it('undecided with its reason: U unknown for a rule that needs it; TUR below the minimum', () => {
    for (const rule of ['guard-band', 'non-binary', 'managed-guard-band'] as const) {
      const r = applyDecisionRule(rule, 0, -T, T, undefined);
      expect(r.decision).toBe('undecided');
      expect(r.undecided?.reason).toBe('uncertainty-unknown');
      expect(r.acceptanceUpper).toBeNull();
    }
    // Simple acceptance does not use U.
    expect(applyDecisionRule('simple', 0.5, -T, T, null).decision).toBe('pass');
    // TUR = 2/(2·0.5) = 2 < 4 (Z540.3 customary fallback used as the site's minimum).
    const low = applyDecisionRule('simple', 0, -T, T, 0.5, { minimumTur: 4 });
    expect(low.decision).toBe('undecided');
    expect(low.undecided?.reason).toBe('tur-below-minimum');
    expect(applyDecisionRule('simple', 0, -T, T, 0.25, { minimumTur: 4 }).decision).toBe('pass');
    expect(applyDecisionRule('simple', 0, -T, T, null, { minimumTur: 4 }).decision).toBe('undecided');
  });
  it('property: a guard-banded rule never reports pass (or any decision) when U is unknown', () => {
    fc.assert(
      fc.property(
        fc.constantFrom(...DECISION_RULES.filter((r) => r !== 'simple')),
        fc.double({ min: -10, max: 10, noNaN: true }),
        fc.double({ min: 0.001, max: 5, noNaN: true }),
        fc.constantFrom(undefined, null),
        (rule, y, t, u) => {
          const r = applyDecisionRule(rule, y, -t, t, u);
          expect(r.decision).toBe('undecided');
          expect(r.undecided?.reason).toBe('uncertainty-unknown');
        },
      ),
    );
  });
  it('worst decision', () => {
    expect(worstDecision(['pass', 'undecided', 'conditional-fail'])).toBe('undecided');
    expect(worstDecision(['undecided', 'fail'])).toBe('fail');
    expect(worstDecision(['pass', 'conditional-fail', 'conditional-pass'])).toBe('conditional-fail');
    expect(worstDecision([])).toBeUndefined();
  });
});

describe('conformance probability (JCGM 106:2012 §7.3)', () => {
  it('T = ±0.1, u = 0.01 (REFERENCE.md example)', () => {
    expect(conformanceProbability(0, -0.1, 0.1, 0.01)).toBeCloseTo(1, 12);
    expect(conformanceProbability(0.1, -0.1, 0.1, 0.01)).toBeCloseTo(0.5, 12);
    // one u inside the limit: Φ(1) − Φ(−19) = 0.841344746 (Φ(1), A&S Table 26.1)
    expect(conformanceProbability(0.09, -0.1, 0.1, 0.01)).toBeCloseTo(0.841344746, 8);
  });
});
