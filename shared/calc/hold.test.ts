import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { analyzeHold, ChannelAccumulator, HoldAnalyzer, type HoldSample } from './hold';

/** mulberry32 PRNG (public-domain algorithm), uniform in [0, 1). */
function mulberry32(seed: number): () => number {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

/** Box–Muller standard normal from a uniform source. */
function gaussian(rand: () => number): () => number {
  return () => {
    const u1 = 1 - rand();
    const u2 = rand();
    return Math.sqrt(-2 * Math.log(u1)) * Math.cos(2 * Math.PI * u2);
  };
}

function trace(seed: number, n: number, dtMs: number, t0: number, y0: number, slopePerMin: number, sigma: number): HoldSample[] {
  const g = gaussian(mulberry32(seed));
  const out: HoldSample[] = [];
  for (let i = 0; i < n; i++) {
    const t = t0 + i * dtMs;
    out.push({ tMs: t, dp: y0 + (slopePerMin * (i * dtMs)) / 60000 + sigma * g(), ma: 12 + 0.001 * g() });
  }
  return out;
}

describe('hold analysis', () => {
  it('recovers a known slope within its statistical bound (property, seeded Gaussian noise)', () => {
    fc.assert(
      fc.property(fc.integer({ min: 1, max: 2 ** 31 - 1 }), fc.double({ min: -2, max: 2, noNaN: true }), (seed, slope) => {
        const n = 300;
        const dt = 100;
        const sigma = 0.01;
        const r = analyzeHold({ dpSpan: 100 }, trace(seed, n, dt, 1.7e12, 50, slope, sigma));
        // Theoretical standard error of an OLS slope: σ/√Σ(t − t̄)², t in minutes.
        const tMin = Array.from({ length: n }, (_, i) => (i * dt) / 60000);
        const tBar = tMin.reduce((a, b) => a + b, 0) / n;
        const se = sigma / Math.sqrt(tMin.reduce((s, t) => s + (t - tBar) ** 2, 0));
        expect(Math.abs(r.dp.slopePerMin - slope)).toBeLessThan(5 * se);
        expect(r.dp.slopeSePerMin).toBeGreaterThan(0.7 * se);
        expect(r.dp.slopeSePerMin).toBeLessThan(1.3 * se);
        expect(r.dp.sd).toBeGreaterThan(0.8 * sigma);
      }),
      { numRuns: 50 },
    );
  });

  it('one sample at a time equals the batch, and a direct two-pass computation (property)', () => {
    fc.assert(
      fc.property(fc.integer({ min: 1, max: 1e9 }), fc.integer({ min: 3, max: 400 }), (seed, n) => {
        const samples = trace(seed, n, 50, 1.7e12, 1000, 1, 0.2);
        const h = new HoldAnalyzer({ dpSpan: 200 });
        for (const s of samples) {
          h.pushDp(s.tMs, s.dp!);
          h.pushMa(s.tMs, s.ma!);
        }
        expect(h.result()).toEqual(analyzeHold({ dpSpan: 200 }, samples));
        // two-pass reference
        const ys = samples.map((s) => s.dp!);
        const ts = samples.map((s) => s.tMs - samples[0]!.tMs);
        const my = ys.reduce((a, b) => a + b, 0) / n;
        const mt = ts.reduce((a, b) => a + b, 0) / n;
        const sd = Math.sqrt(ys.reduce((s, y) => s + (y - my) ** 2, 0) / (n - 1));
        let sxy = 0;
        let sxx = 0;
        ts.forEach((t, i) => {
          sxy += (t - mt) * (ys[i]! - my);
          sxx += (t - mt) ** 2;
        });
        const r = h.result();
        expect(r.dp.mean).toBeCloseTo(my, 9);
        expect(r.dp.sd).toBeCloseTo(sd, 9);
        expect(r.dp.slopePerMin).toBeCloseTo((sxy / sxx) * 60000, 6);
        expect(r.dp.band).toBe(Math.max(...ys) - Math.min(...ys));
      }),
      { numRuns: 50 },
    );
  });

  it('stable and capturable after the hold time (defaults: product defaults / common practice)', () => {
    const samples = trace(7, 310, 100, 0, 50, 0, 0.005);
    const early = analyzeHold({ dpSpan: 100 }, samples.slice(0, 100));
    expect(early.stable).toBe(true);
    expect(early.holdComplete).toBe(false);
    expect(early.capturable).toBe(false);
    const r = analyzeHold({ dpSpan: 100 }, samples);
    expect(r.durationMs).toBe(30900);
    expect(r.leak).toBe(false);
    expect(r.capturable).toBe(true);
    expect(r.reasons).toEqual([]);
  });

  it('flags a leak with its rate in unit/min and % of span/min', () => {
    // −0.5 % of a 100 kPa span per minute
    const r = analyzeHold({ dpSpan: 100 }, trace(3, 300, 100, 0, 50, -0.5, 0.002));
    expect(r.leak).toBe(true);
    expect(r.stable).toBe(false);
    expect(r.leakRateUnitPerMin).toBeCloseTo(-0.5, 1);
    expect(r.leakRatePctSpanPerMin).toBeCloseTo(-0.5, 1);
    expect(r.capturable).toBe(false);
    // the same slope under a looser limit in unit/min is not a leak
    expect(analyzeHold({ dpSpan: 100, leakLimitUnitPerMin: 1 }, trace(3, 300, 100, 0, 50, -0.5, 0.002)).leak).toBe(false);
  });

  it('reset restarts the hold', () => {
    const c = new ChannelAccumulator();
    c.push(0, 1);
    c.push(1000, 5);
    c.reset();
    c.push(5000, 2);
    expect(c.stats()).toMatchObject({ n: 1, mean: 2, band: 0, durationMs: 0 });
  });
});
