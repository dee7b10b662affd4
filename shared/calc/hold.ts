/**
 * Hold analysis: settling, stability and leak detection over timestamped samples, O(1) per sample.
 *
 * Each channel keeps Welford running moments (mean, variance) and the co-moment of time and value
 * (Welford's update extended to covariance), with time taken relative to the channel's first
 * timestamp for numerical stability; the least-squares slope is C_ty/M2_t. The band is the running
 * max − min since the hold started: the window is the hold itself, which the caller restarts
 * (`reset`) when stability is lost, so no sliding window is needed.
 *
 * No universal numeric limits exist (REFERENCE.md, EURAMET cg-17 v4.1): every limit below is a
 * setting, and each default is a product default / common practice, not a standard's value.
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

const MS_PER_MIN = 60_000;

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
  moments(): { n: number; meanT: number; meanY: number; m2t: number; m2y: number; cty: number } {
    return { n: this.n, meanT: this.t0 + this.meanT, meanY: this.meanY, m2t: this.m2t, m2y: this.m2y, cty: this.cty };
  }

  /** Current statistics. */
  stats(): ChannelStats {
    const n = this.n;
    const slope = n >= 2 && this.m2t > 0 ? this.cty / this.m2t : 0;
    let se = Infinity;
    if (n >= 3 && this.m2t > 0) {
      const sse = Math.max(0, this.m2y - (this.cty * this.cty) / this.m2t);
      se = Math.sqrt(sse / (n - 2) / this.m2t);
    }
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
    if (Math.abs(rho) <= 2 * Math.sqrt((1 + 2 * sumSq) / n)) break;
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

/** Hold settings. Defaults are product defaults / common practice. */
export interface HoldSettings {
  /** |URV − LRV| of the DP channel, instrument unit. Required. */
  dpSpan: number;
  /** Hold time, ms. Default 30 000 (a wait of ≥ 30 s after a pressure change is common practice). */
  holdTimeMs?: number;
  /** Stability band of the applied DP, max − min, % of DP span. Default 0.1 %. */
  dpBandPctSpan?: number;
  /** Stability band of the current, max − min, mA. Default 0.016 mA (0.1 % of 16 mA). */
  maBandMa?: number;
  /** Slope limit for stability, % of span per minute (DP span; 16 mA for current). Default 0.05 %/min. */
  slopeLimitPctSpanPerMin?: number;
  /** Leak limit on the DP slope, % of DP span per minute. Default 0.1 %/min. */
  leakLimitPctSpanPerMin?: number;
  /** Leak limit on the DP slope in instrument unit per minute; overrides the % limit when set. */
  leakLimitUnitPerMin?: number;
  /** Minimum samples per channel before any verdict. Default 5. */
  minSamples?: number;
  /** Minimum DP duration before a leak is called, ms (the slope is too noisy before). Default 5 000. */
  leakMinDurationMs?: number;
  /**
   * Sensitivity dI/dP at the point, mA per instrument unit (shared/calc `sensitivityMaPerUnit`).
   * When given, the analyser keeps the per-reading error series e = I − c·(P − P₀), each current
   * paired with the latest applied DP, for {@link HoldAnalyzer.typeA}.
   */
  maPerDpUnit?: number;
  /** Length of each sub-window of the leak-versus-relaxation test, ms. Default 10 000 (product default). */
  trendWindowMs?: number;
}

/**
 * Leak versus relaxation, from the DP slopes of the last three completed sub-windows s₁, s₂, s₃
 * (each fitted by least squares over `trendWindowMs`).
 *
 * A leak is a trend that persists at a near-constant rate; thermal relaxation of the gas in the
 * tubing after a step decays exponentially, so its sub-window slopes fall geometrically,
 * s₂/s₁ = s₃/s₂ = exp(−W/τ). Criterion (product choice, stated here): with S the least-squares
 * slope over the three sub-windows together, the trend is `none` unless |S| exceeds 2 standard
 * errors; it is `relaxation` when the rate decays both significantly (s₁ − s₃, in the direction of
 * the trend, beyond 2 standard errors of the difference) and materially (s₃/s₁ < 0.8: a slower
 * decay over 2W means τ > 2W/ln(1/0.8) ≈ 9·W, 90 s at the default W = 10 s, which no longer
 * settles within a hold); otherwise it is a `leak` with rate S. A relaxation whose decay is lost
 * in the noise reads as a leak at its current (small) rate; only a leak beyond the leak limit is
 * flagged (`leakBeyondLimit`).
 */
export interface TrendVerdict {
  kind: 'none' | 'relaxation' | 'leak' | 'undetermined';
  /** Persistent rate for a leak (slope over the three sub-windows), else the latest sub-window slope; instrument unit per minute. */
  ratePerMin: number;
  /** The same, % of DP span per minute. */
  ratePctSpanPerMin: number;
  /** s₃/s₁; null before three sub-windows. */
  decayRatio: number | null;
  /** Completed sub-windows so far. */
  windows: number;
}

/** The s₃/s₁ ratio at or above which a significant trend counts as persistent (a leak). */
export const LEAK_PERSISTENCE_RATIO = 0.8;

/** Default hold settings (product defaults / common practice). */
export const DEFAULT_HOLD_SETTINGS = {
  holdTimeMs: 30_000,
  dpBandPctSpan: 0.1,
  maBandMa: 0.016,
  slopeLimitPctSpanPerMin: 0.05,
  leakLimitPctSpanPerMin: 0.1,
  minSamples: 5,
  leakMinDurationMs: 5_000,
  trendWindowMs: 10_000,
} as const;

/** Hold verdict. */
export interface HoldResult {
  dp: ChannelStats;
  ma: ChannelStats;
  /** Shorter of the two channels' durations, ms. */
  durationMs: number;
  /** Both channels within band and slope limits with enough samples. */
  stable: boolean;
  /** DP slope beyond the leak limit (after the minimum duration). */
  leak: boolean;
  /** DP slope, instrument unit per minute. */
  leakRateUnitPerMin: number;
  /** DP slope, % of DP span per minute. */
  leakRatePctSpanPerMin: number;
  /** The hold time has elapsed. */
  holdComplete: boolean;
  /** stable, complete and no leak: the point may be captured. */
  capturable: boolean;
  /** Why not stable or capturable (empty when capturable). */
  reasons: string[];
  /**
   * Leak versus relaxation over the last three sub-windows (see {@link TrendVerdict}); `leakBeyondLimit`
   * is a leak whose rate exceeds the leak limit.
   */
  trend: TrendVerdict & { leakBeyondLimit: boolean };
}

/**
 * Standard errors by which a fitted slope must exceed a slope or leak limit before it counts:
 * 2 (about 95 % one-sided for a normal estimate). Product choice, not a published value.
 */
export const SLOPE_SIGNIFICANCE = 2;

/** Two-channel hold analyser (applied DP and mA), fed one sample at a time. */
export class HoldAnalyzer {
  readonly dp = new ChannelAccumulator();
  readonly ma = new ChannelAccumulator();
  private readonly s: Required<Omit<HoldSettings, 'leakLimitUnitPerMin' | 'maPerDpUnit'>> & { leakLimitUnitPerMin: number | undefined; maPerDpUnit: number | undefined };
  private readonly errors = new BoundedSeries();
  private readonly sub = new ChannelAccumulator();
  private subStart = 0;
  private subSlopes: { slope: number; se: number; m: ReturnType<ChannelAccumulator['moments']> }[] = [];
  private subWindows = 0;
  private lastDp: number | undefined;
  private dp0 = 0;

  constructor(settings: HoldSettings) {
    if (!(settings.dpSpan > 0)) throw new RangeError('dpSpan must be > 0');
    this.s = { ...DEFAULT_HOLD_SETTINGS, ...settings, leakLimitUnitPerMin: settings.leakLimitUnitPerMin, maPerDpUnit: settings.maPerDpUnit };
  }

  /** Add an applied-DP sample (ms, instrument unit). */
  pushDp(tMs: number, value: number): void {
    if (this.lastDp === undefined) this.dp0 = value;
    this.lastDp = value;
    this.dp.push(tMs, value);
    if (this.sub.count === 0) this.subStart = tMs;
    else if (tMs - this.subStart >= this.s.trendWindowMs) {
      const st = this.sub.stats();
      if (this.subSlopes.length === 3) this.subSlopes.shift();
      this.subSlopes.push({ slope: st.slopePerMin, se: st.slopeSePerMin, m: this.sub.moments() });
      this.subWindows++;
      this.sub.reset();
      this.subStart = tMs;
    }
    this.sub.push(tMs, value);
  }

  /** Add a current sample (ms, mA). */
  pushMa(tMs: number, value: number): void {
    this.ma.push(tMs, value);
    const c = this.s.maPerDpUnit;
    if (c !== undefined && this.lastDp !== undefined) this.errors.push(value - c * (this.lastDp - this.dp0));
  }

  /** Restart the hold (stability lost, device reconnected, new point). */
  reset(): void {
    this.dp.reset();
    this.ma.reset();
    this.errors.clear();
    this.lastDp = undefined;
    this.sub.reset();
    this.subSlopes = [];
    this.subWindows = 0;
  }

  /** Leak versus relaxation from the last three sub-window slopes (see {@link TrendVerdict}). */
  trend(): TrendVerdict {
    const pct = (x: number) => (x / this.s.dpSpan) * 100;
    const w = this.subSlopes;
    const last = w[w.length - 1];
    if (w.length < 3 || !last) {
      const r = last?.slope ?? 0;
      return { kind: 'undetermined', ratePerMin: r, ratePctSpanPerMin: pct(r), decayRatio: null, windows: this.subWindows };
    }
    const [a, , c] = w as [(typeof w)[number], (typeof w)[number], (typeof w)[number]];
    // Least-squares slope over the three sub-windows together (moments merged pairwise).
    let n = 0;
    let mt = 0;
    let my = 0;
    let m2t = 0;
    let m2y = 0;
    let cty = 0;
    for (const x of w) {
      const nb = x.m.n;
      const N = n + nb;
      const dt = x.m.meanT - mt;
      const dy = x.m.meanY - my;
      m2t += x.m.m2t + (dt * dt * n * nb) / N;
      m2y += x.m.m2y + (dy * dy * n * nb) / N;
      cty += x.m.cty + (dt * dy * n * nb) / N;
      mt += (dt * nb) / N;
      my += (dy * nb) / N;
      n = N;
    }
    const slope = m2t > 0 ? (cty / m2t) * MS_PER_MIN : 0;
    const se = n > 2 && m2t > 0 ? Math.sqrt(Math.max(0, m2y - (cty * cty) / m2t) / (n - 2) / m2t) * MS_PER_MIN : Infinity;
    const ratio = a.slope !== 0 ? c.slope / a.slope : 0;
    // Decay: the first sub-window slope exceeds the last, in the direction of the trend, by more
    // than SLOPE_SIGNIFICANCE standard errors of their difference.
    const decaying = Math.sign(slope) * (a.slope - c.slope) > SLOPE_SIGNIFICANCE * Math.hypot(a.se, c.se);
    let kind: TrendVerdict['kind'] = 'none';
    if (Number.isFinite(se) && Math.abs(slope) > SLOPE_SIGNIFICANCE * se) kind = decaying && ratio < LEAK_PERSISTENCE_RATIO ? 'relaxation' : 'leak';
    const rate = kind === 'leak' ? slope : c.slope;
    return { kind, ratePerMin: rate, ratePctSpanPerMin: pct(rate), decayRatio: ratio, windows: this.subWindows };
  }

  /**
   * Type A standard uncertainty of the mean error over the hold, mA, from the per-reading error
   * series (Zhang 2006 effective n, see {@link TypeAOfMean}); `undefined` without `maPerDpUnit`
   * or with fewer than three readings. Why the error series: the current follows the applied DP,
   * so the scatter of the two channels is correlated (GUM 5.2); the error series carries exactly
   * the part of the scatter that is the instrument's, and its autocorrelation is what GUM 4.2.7
   * warns of. Call it once, at capture: it is O(n·lags).
   */
  typeA(): TypeAOfMean | undefined {
    const { data, length, block } = this.errors.values;
    const r = typeAOfMean(data, length);
    if (!r || block === 1) return r;
    // Block means: the readings behind them are `block` times as many.
    return { ...r, n: r.n * block, nEff: r.nEff };
  }

  /** Verdict from the samples so far. */
  result(): HoldResult {
    // A slope counts against a limit only where it exceeds it by more than SLOPE_SIGNIFICANCE
    // standard errors, so that noise over a short hold is not read as drift or a leak.
    const beyond = (slope: number, se: number, limit: number) => Math.abs(slope) - SLOPE_SIGNIFICANCE * (Number.isFinite(se) ? se : 0) > limit;
    const s = this.s;
    const dp = this.dp.stats();
    const ma = this.ma.stats();
    const reasons: string[] = [];
    const enough = dp.n >= s.minSamples && ma.n >= s.minSamples;
    if (!enough) reasons.push('too few samples');
    const dpBand = (s.dpBandPctSpan / 100) * s.dpSpan;
    const dpSlopeLimit = (s.slopeLimitPctSpanPerMin / 100) * s.dpSpan;
    const maSlopeLimit = (s.slopeLimitPctSpanPerMin / 100) * 16;
    if (dp.band > dpBand) reasons.push('applied DP outside the stability band');
    if (ma.band > s.maBandMa) reasons.push('current outside the stability band');
    if (beyond(dp.slopePerMin, dp.slopeSePerMin, dpSlopeLimit)) reasons.push('applied DP drifting');
    if (beyond(ma.slopePerMin, ma.slopeSePerMin, maSlopeLimit)) reasons.push('current drifting');
    const stable = reasons.length === 0;
    const leakLimit = s.leakLimitUnitPerMin ?? (s.leakLimitPctSpanPerMin / 100) * s.dpSpan;
    const leak = dp.n >= s.minSamples && dp.durationMs >= s.leakMinDurationMs && beyond(dp.slopePerMin, dp.slopeSePerMin, leakLimit);
    if (leak) reasons.push('leak');
    const durationMs = Math.min(dp.durationMs, ma.durationMs);
    const holdComplete = durationMs >= s.holdTimeMs;
    if (!holdComplete) reasons.push('hold time not reached');
    const trend = this.trend();
    return {
      trend: { ...trend, leakBeyondLimit: trend.kind === 'leak' && Math.abs(trend.ratePerMin) > leakLimit },
      dp,
      ma,
      durationMs,
      stable,
      leak,
      leakRateUnitPerMin: dp.slopePerMin,
      leakRatePctSpanPerMin: (dp.slopePerMin / s.dpSpan) * 100,
      holdComplete,
      capturable: stable && holdComplete && !leak,
      reasons,
    };
  }
}

/** One timestamped sample for the batch form; either channel may be absent. */
export interface HoldSample {
  tMs: number;
  dp?: number;
  ma?: number;
}

/** Batch form: a fold of {@link HoldAnalyzer} over the samples. */
export function analyzeHold(settings: HoldSettings, samples: Iterable<HoldSample>): HoldResult {
  const h = new HoldAnalyzer(settings);
  for (const x of samples) {
    if (x.dp !== undefined) h.pushDp(x.tMs, x.dp);
    if (x.ma !== undefined) h.pushMa(x.tMs, x.ma);
  }
  return h.result();
}
