import { describe, expect, it } from 'vitest';
import { binomialLimits, driftPerInterval, intervalTestA3, predictErrorAtDue, staircaseInterval } from './intervals';

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
  it('tutorial case: 15 of 20 in tolerance at 365 days, R* = 0.95, confidence 0.5 → about 231 days', () => {
    // Source: 2019 NCSL International symposium interval tutorial (case as given in our REFERENCE.md).
    const r = intervalTestA3({ intervalDays: 365, inTolerance: 15, total: 20, targetReliability: 0.95, confidence: 0.5, maxChangeFactor: 10 });
    expect(r.observedReliability).toBe(0.75);
    expect(r.passes).toBe(false); // 0.95 lies above the 50 % upper limit (0.829)
    expect(r.upper).toBeCloseTo(0.8286, 3);
    // Default rule ('limit-midpoint', our reconstruction): halfway from 365 d to 365·ln 0.95/ln 0.8286 = 99.6 d.
    expect(r.recommendedDays).toBeCloseTo((365 + (365 * Math.log(0.95)) / Math.log(r.upper)) / 2, 9);
    expect(Math.abs(r.recommendedDays - 231)).toBeLessThan(2.5); // "about 231 days"
    // The harsher reading, all the way from x/n: 65.1 days.
    const obs = intervalTestA3({ intervalDays: 365, inTolerance: 15, total: 20, targetReliability: 0.95, confidence: 0.5, maxChangeFactor: 10, adjustment: 'observed' });
    expect(obs.recommendedDays).toBeCloseTo((365 * Math.log(0.95)) / Math.log(0.75), 9);
  });
  it('extends toward the lower limit when the interval is too reliable, and bounds the change', () => {
    // 20 of 20 at R* = 0.8: the lower 50 % limit lies above 0.8, so the interval grows.
    const r = intervalTestA3({ intervalDays: 100, inTolerance: 20, total: 20, targetReliability: 0.8, confidence: 0.5, maxChangeFactor: 10 });
    expect(r.passes).toBe(false);
    expect(r.lower).toBeGreaterThan(0.8);
    expect(r.recommendedDays).toBeCloseTo((100 + (100 * Math.log(0.8)) / Math.log(r.lower)) / 2, 9);
    expect(r.recommendedDays).toBeGreaterThan(100);
    const capped = intervalTestA3({ intervalDays: 100, inTolerance: 20, total: 20, targetReliability: 0.8, confidence: 0.5, maxChangeFactor: 1.2 });
    expect(capped.recommendedDays).toBe(120);
    const none = intervalTestA3({ intervalDays: 100, inTolerance: 0, total: 5, targetReliability: 0.9, confidence: 0.5, maxChangeFactor: 2 });
    // 0 of 5: the nearest (upper) limit is 1 − 0.25^(1/5) = 0.2421; halfway to 100·ln 0.9/ln 0.2421 = 7.4 d.
    expect(none.upper).toBeCloseTo(1 - 0.25 ** (1 / 5), 9);
    expect(none.recommendedDays).toBeCloseTo((100 + (100 * Math.log(0.9)) / Math.log(none.upper)) / 2, 9);
  });
  it('passes when the target is inside the limits', () => {
    const r = intervalTestA3({ intervalDays: 365, inTolerance: 19, total: 20, targetReliability: 0.95, confidence: 0.5, maxChangeFactor: 2 });
    expect(r.passes).toBe(true);
    expect(r.recommendedDays).toBe(365);
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
