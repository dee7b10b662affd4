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

import { BoundedSeries, ChannelAccumulator, exceedsBySe, mergeMoments, MS_PER_MIN, NO_MOMENTS, slopeOfMoments, typeAOfMean, type ChannelStats, type Moments, type TypeAOfMean } from './hold-stats';

export { BoundedSeries, ChannelAccumulator, exceedsBySe, SIGNIFICANCE_SE, typeAOfMean, type ChannelStats, type TypeAOfMean } from './hold-stats';

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
 * settles within a hold). A leak also goes on: the slope S₂₃ over the last two sub-windows
 * together must itself be significant and of the sign of S; a trend that is not there any more
 * (S₂₃ within 2 standard errors of zero) has settled and is `relaxation` too, and one whose S₂₃
 * has the other sign has reversed (`undetermined`). Otherwise it is a `leak` with rate S. The
 * second test matters when the readings are sparse: a fast settle caught by two or three readings
 * at the start of s₁ leaves s₁ without a usable standard error (fewer than three readings, or a
 * curve fitted by a line), so its decay cannot be shown, while S still carries the step. A
 * relaxation whose decay is lost in the noise reads as a leak at its current (small) rate; only a
 * leak beyond the leak limit is flagged (`leakBeyondLimit`). `undetermined`: fewer than three
 * sub-windows, or s₁ and s₃ (or S and S₂₃) significant and of opposite signs (a reversal).
 *
 * A slope within {@link NEGLIGIBLE_SLOPE_OF_SPAN} of zero is never significant: readings that do
 * not change at all (a quantised or simulated signal) leave round-off in the merged moments whose
 * standard error is smaller still.
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

/**
 * Slope, as a fraction of the DP span per minute, at or below which a trend counts as none
 * whatever its standard error: far below any leak limit (the default is 1e-3 of span per minute)
 * and far above the round-off of moments merged over constant readings (about 1e-13 of the
 * values). Our own choice.
 */
export const NEGLIGIBLE_SLOPE_OF_SPAN = 1e-9;

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
  /** Why not stable or capturable (empty when capturable); {@link HOLD_REASON_TEXT} words them. */
  reasons: HoldReason[];
  /**
   * Leak versus relaxation over the last three sub-windows (see {@link TrendVerdict}); `leakBeyondLimit`
   * is a leak whose rate exceeds the leak limit.
   */
  trend: TrendVerdict & { leakBeyondLimit: boolean };
}

/** Why a hold is not (yet) stable or capturable. */
export type HoldReason = 'too-few-samples' | 'dp-band' | 'ma-band' | 'dp-drift' | 'ma-drift' | 'leak' | 'hold-time';

/** Each {@link HoldReason} in words. */
export const HOLD_REASON_TEXT: Record<HoldReason, string> = {
  'too-few-samples': 'too few samples',
  'dp-band': 'applied DP outside the stability band',
  'ma-band': 'current outside the stability band',
  'dp-drift': 'applied DP drifting',
  'ma-drift': 'current drifting',
  leak: 'leak',
  'hold-time': 'hold time not reached',
};

/** Least-squares slope and its standard error, per minute, over consecutive sub-windows (their moments merged). */
function mergedSlope(windows: readonly { m: Moments }[]): { slope: number; se: number } {
  const fit = slopeOfMoments(windows.map((x) => x.m).reduce(mergeMoments, NO_MOMENTS));
  return { slope: fit.slope * MS_PER_MIN, se: fit.se * MS_PER_MIN };
}

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
    // Least-squares slope over the three sub-windows together, and over the last two.
    const { slope, se } = mergedSlope(w);
    const later = mergedSlope(w.slice(1));
    const floor = NEGLIGIBLE_SLOPE_OF_SPAN * this.s.dpSpan;
    const significant = (x: number, xSe: number) => Number.isFinite(xSe) && Math.abs(x) > floor && exceedsBySe(Math.abs(x), xSe);
    const ratio = a.slope !== 0 ? c.slope / a.slope : 0;
    // Decay: the first sub-window slope exceeds the last, in the direction of the trend, by more
    // than SIGNIFICANCE_SE standard errors of their difference.
    const decaying = exceedsBySe(Math.sign(slope) * (a.slope - c.slope), Math.hypot(a.se, c.se));
    // An exponential decay keeps its sign. A trend whose first and last sub-window slopes are both
    // significant (beyond SIGNIFICANCE_SE standard errors) and of opposite signs has reversed (a
    // rise then a fall): neither a decay nor a steady leak, it is `undetermined` until the three
    // sub-windows agree again (a fall that persists is then a leak).
    const reversed = Math.sign(a.slope) !== Math.sign(c.slope) && exceedsBySe(Math.abs(a.slope), a.se) && exceedsBySe(Math.abs(c.slope), c.se);
    let kind: TrendVerdict['kind'] = 'none';
    if (significant(slope, se)) {
      if (reversed) kind = 'undetermined';
      else if (decaying && ratio < LEAK_PERSISTENCE_RATIO) kind = 'relaxation';
      // Not shown to decay: a leak only if the trend goes on over the last two sub-windows.
      else if (!significant(later.slope, later.se)) kind = 'relaxation';
      else kind = Math.sign(later.slope) === Math.sign(slope) ? 'leak' : 'undetermined';
    }
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
    // A slope counts against a limit only where it exceeds it by more than SIGNIFICANCE_SE
    // standard errors, so that noise over a short hold is not read as drift or a leak.
    const beyond = (slope: number, se: number, limit: number) => exceedsBySe(Math.abs(slope), Number.isFinite(se) ? se : 0, limit);
    const s = this.s;
    const dp = this.dp.stats();
    const ma = this.ma.stats();
    const reasons: HoldReason[] = [];
    const enough = dp.n >= s.minSamples && ma.n >= s.minSamples;
    if (!enough) reasons.push('too-few-samples');
    const dpBand = (s.dpBandPctSpan / 100) * s.dpSpan;
    const dpSlopeLimit = (s.slopeLimitPctSpanPerMin / 100) * s.dpSpan;
    const maSlopeLimit = (s.slopeLimitPctSpanPerMin / 100) * 16;
    if (dp.band > dpBand) reasons.push('dp-band');
    if (ma.band > s.maBandMa) reasons.push('ma-band');
    if (beyond(dp.slopePerMin, dp.slopeSePerMin, dpSlopeLimit)) reasons.push('dp-drift');
    if (beyond(ma.slopePerMin, ma.slopeSePerMin, maSlopeLimit)) reasons.push('ma-drift');
    const stable = reasons.length === 0;
    const leakLimit = s.leakLimitUnitPerMin ?? (s.leakLimitPctSpanPerMin / 100) * s.dpSpan;
    const leak = dp.n >= s.minSamples && dp.durationMs >= s.leakMinDurationMs && beyond(dp.slopePerMin, dp.slopeSePerMin, leakLimit);
    if (leak) reasons.push('leak');
    const durationMs = Math.min(dp.durationMs, ma.durationMs);
    const holdComplete = durationMs >= s.holdTimeMs;
    if (!holdComplete) reasons.push('hold-time');
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
