import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { binomialLimits, driftPerInterval, intervalTest, exponentialInterval, recommendIntervals, type ExponentialIntervalResult, predictErrorAtDue, staircaseInterval } from './intervals';

const DAY = 86_400_000;

describe('drift', () => {
  it('drift per interval = as-found(k) − as-left(k−1)', () => {
    const ev = [
      { atMs: 365 * DAY, asFound: 0.3, asLeft: 0.02 },
      { atMs: 0, asFound: 0.1, asLeft: 0 },
      { atMs: 730 * DAY, asFound: 0.22, asLeft: 0.01 },
    ];
    const d = driftPerInterval(ev);
    expect(d.map((x) => x.drift)).toEqual([0.3, 0.2]);
    expect(d[0]!.ratePerDay).toBeCloseTo(0.3 / 365, 15);
    // mean rate (0.5/730 per day) × 365 days from the last as-left 0.01
    expect(predictErrorAtDue(ev, 1095 * DAY)).toBeCloseTo(0.01 + 0.25, 12);
    expect(predictErrorAtDue(ev.slice(0, 1), 1095 * DAY)).toBeUndefined();
  });
});

describe('NCSLI RP-1 (2010) Method A3 interval test', () => {
  it('binomial limits bracket the observed reliability', () => {
    const l = binomialLimits(15, 20, 0.95);
    expect(l.lower).toBeLessThan(0.75);
    expect(l.upper).toBeGreaterThan(0.75);
    // Clopper–Pearson 95 % for 15/20: 0.5090–0.9134 (standard tables; value from memory)
    expect(l.lower).toBeCloseTo(0.509, 3);
    expect(l.upper).toBeCloseTo(0.9134, 3);
  });
  it('interval test: keep, lengthen or shorten by the Clopper–Pearson limits', () => {
    // 15 of 20 at 50 % confidence: upper limit 0.8286 (Clopper–Pearson, Biometrika 26 (1934) 404–413); R* 0.95 above it → shorten.
    const r = intervalTest({ inTolerance: 15, total: 20, targetReliability: 0.95, confidence: 0.5 });
    expect(r.observedReliability).toBe(0.75);
    expect(r.upper).toBeCloseTo(0.8286, 3);
    expect(r.verdict).toBe('shorten');
    // 0 of 5: upper limit 1 − 0.25^(1/5) (closed form of the Clopper–Pearson limit at x = 0).
    expect(intervalTest({ inTolerance: 0, total: 5, targetReliability: 0.9, confidence: 0.5 }).upper).toBeCloseTo(1 - 0.25 ** (1 / 5), 9);
    // 20 of 20: lower limit 0.25^(1/20) = 0.9330 above R* = 0.8 → lengthen.
    const l = intervalTest({ inTolerance: 20, total: 20, targetReliability: 0.8, confidence: 0.5 });
    expect(l.lower).toBeCloseTo(0.25 ** (1 / 20), 9);
    expect(l.verdict).toBe('lengthen');
    expect(intervalTest({ inTolerance: 19, total: 20, targetReliability: 0.95, confidence: 0.5 }).verdict).toBe('keep');
  });
  it('exponential model: λ̂ = −ln(x/n)/I for one interval length, t = −ln R*/λ, range from both limits', () => {
    // 15 of 20 at 365 d: λ̂ = −ln 0.75/365; t(R* = 0.95) = 365·ln 0.95/ln 0.75 = 65.06 d (derivable by hand).
    const e = exponentialInterval([{ intervalDays: 365, inTolerance: 15, total: 20 }], 0.95, 0.5);
    expect(e.lambdaPerDay).toBeCloseTo(-Math.log(0.75) / 365, 9);
    expect(e.estimateDays).toBeCloseTo((365 * Math.log(0.95)) / Math.log(0.75), 4);
    expect(e.rangeDays[0]).toBeLessThan(e.estimateDays!);
    expect(e.rangeDays[1]!).toBeGreaterThan(e.estimateDays!);
    // Likelihood-ratio limits: 2(ℓ(λ̂) − ℓ(λ)) = z² at both ends (z = 0.6745 at 50 %).
    // No failures: λ̂ = 0, the interval is unbounded above; the lower end stays finite.
    const none = exponentialInterval([{ intervalDays: 365, inTolerance: 20, total: 20 }], 0.95, 0.5);
    expect(none.lambdaPerDay).toBe(0);
    expect(none.estimateDays).toBeNull();
    expect(none.rangeDays[1]).toBeNull();
    expect(none.rangeDays[0]).toBeGreaterThan(0);
  });
  it('the 2019 tutorial figure is kept as an external value, NOT reproduced', () => {
    // External value, not reproduced: a 2019 NCSL International tutorial gives about 231 days for
    // 15 of 20 in tolerance at 365 days, R* = 0.95, confidence 0.5 (REFERENCE.md). RP-1's rule for
    // the new interval is not available to us; a rule chosen because it reproduces this one number
    // would be no evidence (equally plausible rules give 65 to 286 days), so no method here is
    // tuned to it. What we compute for that case, by methods fully specified above:
    const TUTORIAL_DAYS_NOT_REPRODUCED = 231;
    const a = recommendIntervals([{ intervalDays: 365, inTolerance: 15, total: 20 }], 365, 0.95, 0.5);
    expect(a.test.verdict).toBe('shorten');
    expect(a.exponential.estimateDays).toBeCloseTo(65.06, 1);
    expect(a.exponential.estimateDays).not.toBeCloseTo(TUTORIAL_DAYS_NOT_REPRODUCED, 0);
  });
  it('property: the recommendation is monotone in the in-tolerance count', () => {
    fc.assert(
      fc.property(
        fc.integer({ min: 1, max: 40 }),
        fc.integer({ min: 30, max: 1000 }),
        fc.double({ min: 0.5, max: 0.99, noNaN: true }),
        fc.double({ min: 0.2, max: 0.95, noNaN: true }),
        (n, days, target, conf) => {
          let prev: ExponentialIntervalResult | undefined;
          for (let x = 0; x <= n; x++) {
            const e = exponentialInterval([{ intervalDays: days, inTolerance: x, total: n }], target, conf);
            if (prev) {
              const inf = (v: number | null) => v ?? Infinity;
              expect(inf(e.estimateDays)).toBeGreaterThanOrEqual(inf(prev.estimateDays) * (1 - 1e-9));
              expect(e.rangeDays[0]).toBeGreaterThanOrEqual(prev.rangeDays[0] * (1 - 1e-6));
              expect(inf(e.rangeDays[1])).toBeGreaterThanOrEqual(inf(prev.rangeDays[1]) * (1 - 1e-6));
            }
            prev = e;
          }
        },
      ),
      { numRuns: 40 },
    );
  });
});

describe('staircase (ILAC-G24 / OIML D 10:2022)', () => {
  const p = { intervalDays: 365, extendAtOrBelow: 0.5, extendFactor: 1.25, shortenFactor: 0.5, minDays: 90, maxDays: 730 };
  it('extends, keeps, shortens and bounds', () => {
    expect(staircaseInterval({ ...p, asFoundFractionOfTolerance: 0.3 })).toEqual({ action: 'extend', recommendedDays: 456.25 });
    expect(staircaseInterval({ ...p, asFoundFractionOfTolerance: 0.8 })).toEqual({ action: 'keep', recommendedDays: 365 });
    expect(staircaseInterval({ ...p, asFoundFractionOfTolerance: 1.2 })).toEqual({ action: 'shorten', recommendedDays: 182.5 });
    expect(staircaseInterval({ ...p, intervalDays: 700, asFoundFractionOfTolerance: 0 }).recommendedDays).toBe(730);
  });
});
