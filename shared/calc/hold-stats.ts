/**
 * Running statistics behind the hold analysis (hold.ts): one channel's Welford moments and
 * least-squares slope, O(1) per sample; the Type A of the mean of an autocorrelated series; and a
 * bounded series for it.
 */

/** Running statistics of one channel. */
export interface ChannelStats {
  n: number;
  mean: number;
  /** Sample standard deviation (n − 1); 0 for n < 2. */
  sd: number;
  /** Least-squares slope, unit per minute; 0 for n < 2 or zero time spread. */
  slopePerMin: number;
  /** Standard error of the slope, unit per minute; Infinity for n < 3. */
  slopeSePerMin: number;
  min: number;
  max: number;
  /** max − min since the hold started. */
  band: number;
  /** Last minus first timestamp, ms. */
  durationMs: number;
}

/** Milliseconds per minute (slopes are per minute). */
export const MS_PER_MIN = 60_000;

/**
 * Standard errors by which an estimate must exceed a limit before it counts: 2 (about 95 % for a
 * normal estimate). Product choice for slopes and leaks, not a published value; for the
 * autocorrelation lags of {@link typeAOfMean} it is Box & Jenkins' usual bound (stated from memory).
 */
export const SIGNIFICANCE_SE = 2;

/**
 * The one significance test: `x` exceeds `limit` (default 0) by more than {@link SIGNIFICANCE_SE}
 * standard errors `se`. One-sided in `x`: pass `Math.abs(x)` for a two-sided test.
 */
export function exceedsBySe(x: number, se: number, limit = 0): boolean {
  return x - SIGNIFICANCE_SE * se > limit;
}

/** Raw moments of (time, value) pairs, as {@link ChannelAccumulator.moments} returns them. */
export interface Moments {
  n: number;
  meanT: number;
  meanY: number;
  m2t: number;
  m2y: number;
  cty: number;
}

/**
 * Least-squares slope of value on time and its standard error, both per ms, from raw moments:
 * slope 0 below two samples or with no time spread, standard error Infinity below three.
 */
export function slopeOfMoments(m: Pick<Moments, 'n' | 'm2t' | 'm2y' | 'cty'>): { slope: number; se: number } {
  const slope = m.n >= 2 && m.m2t > 0 ? m.cty / m.m2t : 0;
  const se = m.n >= 3 && m.m2t > 0 ? Math.sqrt(Math.max(0, m.m2y - (m.cty * m.cty) / m.m2t) / (m.n - 2) / m.m2t) : Infinity;
  return { slope, se };
}

/** The moments of no samples: the identity of {@link mergeMoments}. */
export const NO_MOMENTS: Moments = { n: 0, meanT: 0, meanY: 0, m2t: 0, m2y: 0, cty: 0 };

/**
 * The moments of two sample sets together, from each set's moments (the pairwise update of Chan,
 * Golub and LeVeque, "Updating formulae and a pairwise algorithm for computing sample variances",
 * 1979, extended to the co-moment).
 */
export function mergeMoments(a: Moments, b: Moments): Moments {
  if (a.n === 0) return b;
  if (b.n === 0) return a;
  const n = a.n + b.n;
  const dt = b.meanT - a.meanT;
  const dy = b.meanY - a.meanY;
  const w = (a.n * b.n) / n;
  return {
    n,
    meanT: a.meanT + (dt * b.n) / n,
    meanY: a.meanY + (dy * b.n) / n,
    m2t: a.m2t + b.m2t + dt * dt * w,
    m2y: a.m2y + b.m2y + dy * dy * w,
    cty: a.cty + b.cty + dt * dy * w,
  };
}

/** Incremental statistics of one channel; O(1) per sample. Timestamps in ms, non-decreasing. */
export class ChannelAccumulator {
  private n = 0;
  private t0 = 0;
  private lastT = 0;
  private meanT = 0;
  private meanY = 0;
  private m2t = 0;
  private m2y = 0;
  private cty = 0;
  private min = Infinity;
  private max = -Infinity;

  /** Add one sample. */
  push(tMs: number, y: number): void {
    if (this.n === 0) this.t0 = tMs;
    this.lastT = tMs;
    const t = tMs - this.t0;
    const n = ++this.n;
    const dt = t - this.meanT;
    this.meanT += dt / n;
    const dy = y - this.meanY;
    this.meanY += dy / n;
    const dy2 = y - this.meanY;
    this.m2t += dt * (t - this.meanT);
    this.m2y += dy * dy2;
    this.cty += dt * dy2;
    if (y < this.min) this.min = y;
    if (y > this.max) this.max = y;
  }

  /** Forget everything (a new hold). */
  reset(): void {
    this.n = 0;
    this.meanT = this.meanY = this.m2t = this.m2y = this.cty = 0;
    this.min = Infinity;
    this.max = -Infinity;
  }

  /** Number of samples so far. */
  get count(): number {
    return this.n;
  }

  /** Raw moments for merging windows (Chan et al.'s pairwise update): mean time is absolute, ms. */
  moments(): Moments {
    return { n: this.n, meanT: this.t0 + this.meanT, meanY: this.meanY, m2t: this.m2t, m2y: this.m2y, cty: this.cty };
  }

  /** Current statistics. */
  stats(): ChannelStats {
    const n = this.n;
    const { slope, se } = slopeOfMoments({ n, m2t: this.m2t, m2y: this.m2y, cty: this.cty });
    return {
      n,
      mean: n > 0 ? this.meanY : NaN,
      sd: n >= 2 ? Math.sqrt(this.m2y / (n - 1)) : 0,
      slopePerMin: slope * MS_PER_MIN,
      slopeSePerMin: se * MS_PER_MIN,
      min: this.min,
      max: this.max,
      band: n > 0 ? this.max - this.min : 0,
      durationMs: n > 0 ? this.lastT - this.t0 : 0,
    };
  }
}

/**
 * Type A standard uncertainty of the mean of an autocorrelated series.
 *
 * Method: the effective number of observations from the sample autocorrelation, after N. F. Zhang,
 * "Calculation of the uncertainty of the mean of autocorrelated measurements", Metrologia 43
 * (2006) S276–S281. For a stationary series, Var(ȳ) = (σ²/n)·γ with
 * γ = 1 + 2·Σ_{k=1}^{n−1}(1 − k/n)·ρ_k and E[s²] = σ²·(n − γ)/(n − 1); so with n_eff = n/γ the
 * unbiased estimate is u²(ȳ) = s²·(n − 1)/(n·(n_eff − 1)), which is s²/n for independent readings
 * (these two identities are derived in the paper and can be checked by hand). The sum uses the
 * sample autocorrelations ρ̂_k up to the first lag that is not significant, |ρ̂_k| ≤ 2·√(v_k) with
 * Bartlett's variance v_k = (1 + 2·Σ_{i<k} ρ̂_i²)/n (Box & Jenkins), and at most n/4 lags; the cut
 * and the degrees of freedom ν = n_eff − 1 are our reading of the paper, stated from memory.
 * n_eff is kept within [2, n].
 */
export interface TypeAOfMean {
  /** Standard uncertainty of the mean, unit of the series. */
  u: number;
  /** Sample standard deviation of the series. */
  sd: number;
  /** Observations used. */
  n: number;
  /** Effective number of observations (n for independent readings). */
  nEff: number;
  /** Degrees of freedom, n_eff − 1. */
  dof: number;
  /** Lags summed in γ. */
  lags: number;
  method: 'zhang-2006-effective-n';
}

/** {@link TypeAOfMean} of a series (≥ 3 values); `undefined` for fewer. O(n·lags). */
export function typeAOfMean(y: ArrayLike<number>, length = y.length): TypeAOfMean | undefined {
  const n = length;
  if (n < 3) return undefined;
  let mean = 0;
  for (let i = 0; i < n; i++) mean += y[i]!;
  mean /= n;
  let c0 = 0;
  for (let i = 0; i < n; i++) c0 += (y[i]! - mean) ** 2;
  const sd = Math.sqrt(c0 / (n - 1));
  if (c0 === 0) return { u: 0, sd: 0, n, nEff: n, dof: n - 1, lags: 0, method: 'zhang-2006-effective-n' };
  let gamma = 1;
  let sumSq = 0;
  let lags = 0;
  const maxLag = Math.floor(n / 4);
  for (let k = 1; k <= maxLag; k++) {
    let ck = 0;
    for (let i = 0; i + k < n; i++) ck += (y[i]! - mean) * (y[i + k]! - mean);
    const rho = ck / c0;
    if (!exceedsBySe(Math.abs(rho), Math.sqrt((1 + 2 * sumSq) / n))) break;
    gamma += 2 * (1 - k / n) * rho;
    sumSq += rho * rho;
    lags = k;
  }
  const nEff = Math.min(n, Math.max(2, n / Math.max(gamma, 1e-12)));
  const u = sd * Math.sqrt((n - 1) / (n * (nEff - 1)));
  return { u, sd, n, nEff, dof: nEff - 1, lags, method: 'zhang-2006-effective-n' };
}

/**
 * A series kept in bounded memory, O(1) amortised per value: values are stored as they come until
 * `capacity`, then adjacent pairs are averaged and later values go in blocks twice as long (block
 * means of a stationary series are again stationary, so the Type A of the mean can be evaluated
 * on them; the incomplete last block is left out of that evaluation).
 */
export class BoundedSeries {
  private buf: Float64Array;
  private len = 0;
  private block = 1;
  private partialSum = 0;
  private partialN = 0;

  constructor(private readonly capacity = 1 << 16) {
    this.buf = new Float64Array(Math.min(capacity, 1024));
  }

  push(v: number): void {
    this.partialSum += v;
    if (++this.partialN < this.block) return;
    const m = this.partialSum / this.block;
    this.partialSum = 0;
    this.partialN = 0;
    if (this.len === this.buf.length) {
      const next = new Float64Array(Math.min(this.capacity, this.buf.length * 2));
      next.set(this.buf);
      this.buf = next;
    }
    this.buf[this.len++] = m;
    if (this.len === this.capacity) {
      // Full: average adjacent pairs; later values go in blocks twice as long.
      const half = this.len >> 1;
      for (let i = 0; i < half; i++) this.buf[i] = 0.5 * (this.buf[2 * i]! + this.buf[2 * i + 1]!);
      this.len = half;
      this.block *= 2;
    }
  }

  clear(): void {
    this.len = 0;
    this.block = 1;
    this.partialSum = 0;
    this.partialN = 0;
  }

  /** Stored values (block means once the capacity was reached) and the block length. */
  get values(): { data: Float64Array; length: number; block: number } {
    return { data: this.buf, length: this.len, block: this.block };
  }
}
