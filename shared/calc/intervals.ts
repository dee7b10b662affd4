/**
 * Drift and calibration-interval methods: drift per interval (as-found(k) − as-left(k−1)),
 * linear-trend prediction, the interval test (Clopper–Pearson limits, as REFERENCE.md describes
 * NCSLI RP-1 A3's test), the exponential reliability model with a maximum-likelihood estimate and
 * likelihood-ratio limits, and the ILAC-G24 / OIML D 10:2022 staircase method. All parameters are
 * explicit. Times in ms (passed in).
 */
import { studentTQuantile } from './student-t';

/** One calibration event of a tag at one point (errors in % of span; trend rooted outputs in DP terms). */
export interface CalibrationEvent {
  atMs: number;
  asFound: number;
  asLeft: number;
}

/** Drift over one interval. */
export interface Drift {
  fromMs: number;
  toMs: number;
  /** as-found(k) − as-left(k−1). */
  drift: number;
  /** drift per day. */
  ratePerDay: number;
}

const MS_PER_DAY = 86_400_000;

/** Drift per interval for events sorted by time (sorted here; the input is not modified). */
export function driftPerInterval(events: readonly CalibrationEvent[]): Drift[] {
  const e = [...events].sort((a, b) => a.atMs - b.atMs);
  const out: Drift[] = [];
  for (let k = 1; k < e.length; k++) {
    const prev = e[k - 1]!;
    const cur = e[k]!;
    const days = (cur.atMs - prev.atMs) / MS_PER_DAY;
    const drift = cur.asFound - prev.asLeft;
    out.push({ fromMs: prev.atMs, toMs: cur.atMs, drift, ratePerDay: days > 0 ? drift / days : NaN });
  }
  return out;
}

/**
 * Predicted as-found error at the next due date: the last as-left plus the mean drift rate
 * (least-squares slope through the origin of drift against interval length) times the time to the
 * due date. `undefined` with no drift history.
 */
export function predictErrorAtDue(events: readonly CalibrationEvent[], dueMs: number): number | undefined {
  const d = driftPerInterval(events);
  if (d.length === 0) return undefined;
  let sxx = 0;
  let sxy = 0;
  for (const x of d) {
    const days = (x.toMs - x.fromMs) / MS_PER_DAY;
    sxx += days * days;
    sxy += days * x.drift;
  }
  if (sxx === 0) return undefined;
  const last = [...events].sort((a, b) => a.atMs - b.atMs).at(-1)!;
  return last.asLeft + (sxy / sxx) * ((dueMs - last.atMs) / MS_PER_DAY);
}

/** log of the binomial cdf P(X ≤ x | n, p), summed directly (n is small in interval work). */
function binomCdf(x: number, n: number, p: number): number {
  if (x < 0) return 0;
  if (x >= n) return 1;
  let sum = 0;
  let logC = 0; // log C(n, 0)
  for (let i = 0; i <= x; i++) {
    if (i > 0) logC += Math.log(n - i + 1) - Math.log(i);
    const lp = i === 0 ? n * Math.log1p(-p) : logC + i * Math.log(p) + (n - i) * Math.log1p(-p);
    sum += Math.exp(lp);
  }
  return Math.min(1, sum);
}

function bisect(f: (p: number) => number, lo: number, hi: number): number {
  for (let i = 0; i < 200; i++) {
    const mid = (lo + hi) / 2;
    if (f(mid) > 0) lo = mid;
    else hi = mid;
  }
  return (lo + hi) / 2;
}

/**
 * Two-sided Clopper–Pearson binomial confidence limits for x successes in n trials.
 * @param confidence two-sided confidence level, 0–1
 */
export function binomialLimits(x: number, n: number, confidence: number): { lower: number; upper: number } {
  if (!(n > 0 && x >= 0 && x <= n)) throw new RangeError('need 0 ≤ x ≤ n, n > 0');
  const a = (1 - confidence) / 2;
  const lower = x === 0 ? 0 : bisect((p) => a - (1 - binomCdf(x - 1, n, p)), 0, 1);
  const upper = x === n ? 1 : bisect((p) => binomCdf(x, n, p) - a, 0, 1);
  return { lower, upper };
}

/** Input of the interval test. */
export interface IntervalTestInput {
  /** Calibrations found in tolerance at (about) the current interval. */
  inTolerance: number;
  /** Calibrations at that interval. */
  total: number;
  /** End-of-period reliability target R*, 0–1 (e.g. 0.95). */
  targetReliability: number;
  /** Two-sided confidence of the binomial limits, 0–1 (e.g. 0.5). */
  confidence: number;
}

/** Result of the interval test. */
export interface IntervalTestResult {
  observedReliability: number;
  lower: number;
  upper: number;
  /**
   * keep: R* lies inside the limits; lengthen: R* lies below the lower limit (more reliable than
   * needed); shorten: R* lies above the upper limit.
   */
  verdict: 'keep' | 'lengthen' | 'shorten';
}

/**
 * The interval test, as REFERENCE.md describes NCSLI RP-1 (2010) A3's test: is the target R*
 * inside the two-sided binomial (Clopper & Pearson, Biometrika 26 (1934) 404–413) confidence
 * limits of the observed in-tolerance fraction? It says whether to keep, lengthen or shorten; it
 * does not say by how much (RP-1's rule for the new interval is not implemented: its text was not
 * available to us).
 */
export function intervalTest(i: IntervalTestInput): IntervalTestResult {
  if (!(i.total > 0 && i.inTolerance >= 0 && i.inTolerance <= i.total)) throw new RangeError('need 0 ≤ inTolerance ≤ total, total > 0');
  if (!(i.targetReliability > 0 && i.targetReliability < 1)) throw new RangeError('target reliability must be in (0, 1)');
  const { lower, upper } = binomialLimits(i.inTolerance, i.total, i.confidence);
  const verdict = i.targetReliability < lower ? 'lengthen' : i.targetReliability > upper ? 'shorten' : 'keep';
  return { observedReliability: i.inTolerance / i.total, lower, upper, verdict };
}

/** In-tolerance counts found at the end of one interval length. */
export interface IntervalHistoryGroup {
  /** Interval length the instruments had been in service for, days (> 0). */
  intervalDays: number;
  inTolerance: number;
  total: number;
}

/** Exponential reliability model result. */
export interface ExponentialIntervalResult {
  /** Maximum-likelihood failure rate λ̂, per day (0 when nothing was found out of tolerance). */
  lambdaPerDay: number;
  /** Confidence limits of λ (likelihood ratio), per day. */
  lambdaLower: number;
  lambdaUpper: number;
  /** Interval giving R* at λ̂, days; null when unbounded (λ̂ = 0). */
  estimateDays: number | null;
  /** Interval range from both confidence limits of λ: [at λ upper, at λ lower]; the upper end null when unbounded. */
  rangeDays: [number, number | null];
}

function logLik(g: readonly IntervalHistoryGroup[], lambda: number): number {
  let l = 0;
  for (const x of g) {
    const lt = lambda * x.intervalDays;
    l += -x.inTolerance * lt;
    const out = x.total - x.inTolerance;
    if (out > 0) l += out * (lt > 0 ? Math.log(-Math.expm1(-lt)) : -Infinity);
  }
  return l;
}

/**
 * Exponential reliability model R(t) = exp(−λt) (OIML D 10 / ILAC-G24 and RP-1 name reliability
 * models of this kind; this one is fully specified here). Estimator: maximum likelihood for the
 * in/out-of-tolerance outcomes at the end of each interval, ℓ(λ) = Σ[x·(−λI) + (n − x)·ln(1 − e^(−λI))]
 * (for one interval length this gives λ̂ = −ln(x/n)/I). Confidence limits of λ by the likelihood
 * ratio, {λ : 2(ℓ(λ̂) − ℓ(λ)) ≤ z²} with z the two-sided normal quantile at `confidence` (Wilks'
 * theorem). The interval for R* is t = −ln(R*)/λ; the range from both limits is reported, not a
 * midpoint. The interval test (Clopper–Pearson) is reported beside it by {@link recommendIntervals}.
 */
export function exponentialInterval(history: readonly IntervalHistoryGroup[], targetReliability: number, confidence: number): ExponentialIntervalResult {
  const g = history.filter((x) => x.total > 0);
  if (g.length === 0) throw new RangeError('no calibrations in the history');
  for (const x of g) if (!(x.intervalDays > 0 && x.inTolerance >= 0 && x.inTolerance <= x.total)) throw new RangeError('need intervalDays > 0 and 0 ≤ inTolerance ≤ total');
  if (!(targetReliability > 0 && targetReliability < 1)) throw new RangeError('target reliability must be in (0, 1)');
  if (!(confidence > 0 && confidence < 1)) throw new RangeError('confidence must be in (0, 1)');
  const outs = g.reduce((s, x) => s + x.total - x.inTolerance, 0);
  const ins = g.reduce((s, x) => s + x.inTolerance, 0);
  const maxI = Math.max(...g.map((x) => x.intervalDays));
  const minI = Math.min(...g.map((x) => x.intervalDays));
  // The likelihood is concave in λ; its maximum is at 0 with no failures, at ∞ with no successes.
  let lambdaHat: number;
  const hi = 50 / minI;
  if (outs === 0) lambdaHat = 0;
  else if (ins === 0) lambdaHat = hi;
  else {
    const d = (l: number) => {
      let s = 0;
      for (const x of g) {
        const lt = l * x.intervalDays;
        s += -x.inTolerance * x.intervalDays + ((x.total - x.inTolerance) * x.intervalDays * Math.exp(-lt)) / -Math.expm1(-lt);
      }
      return s;
    };
    let lo = 1e-12 / maxI;
    let up = hi;
    for (let k = 0; k < 200; k++) {
      const mid = Math.sqrt(lo * up);
      if (d(mid) > 0) lo = mid;
      else up = mid;
    }
    lambdaHat = Math.sqrt(lo * up);
  }
  const z = studentTQuantile(confidence, Infinity);
  const lMax = logLik(g, lambdaHat);
  const inside = (l: number) => 2 * (lMax - logLik(g, l)) <= z * z;
  const solve = (a: number, b: number) => {
    // a inside, b outside
    for (let k = 0; k < 200; k++) {
      const mid = a > 0 && b > 0 ? Math.sqrt(a * b) : (a + b) / 2;
      if (inside(mid)) a = mid;
      else b = mid;
    }
    return a;
  };
  const lambdaLower = lambdaHat === 0 || inside(1e-15) ? 0 : solve(lambdaHat, 1e-15);
  const lambdaUpper = inside(hi) ? hi : solve(lambdaHat === 0 ? 1e-15 : lambdaHat, hi);
  const t = (l: number) => (l > 0 ? -Math.log(targetReliability) / l : null);
  return { lambdaPerDay: lambdaHat, lambdaLower, lambdaUpper, estimateDays: t(lambdaHat), rangeDays: [t(lambdaUpper) ?? 0, t(lambdaLower)] };
}

/** Interval analysis of a history with given targets (used by `POST /api/calc/intervals`). */
export interface IntervalAnalysis {
  /** The interval test on the calibrations at the current interval. */
  test: IntervalTestResult;
  exponential: ExponentialIntervalResult;
}

/**
 * Interval test at the current interval (the history group with the largest interval equal to
 * `currentIntervalDays`, or all groups pooled when none matches) and the exponential model over the
 * whole history.
 */
export function recommendIntervals(history: readonly IntervalHistoryGroup[], currentIntervalDays: number, targetReliability: number, confidence: number): IntervalAnalysis {
  const at = history.filter((x) => x.intervalDays === currentIntervalDays);
  const pool = at.length ? at : history;
  const inTolerance = pool.reduce((s, x) => s + x.inTolerance, 0);
  const total = pool.reduce((s, x) => s + x.total, 0);
  return {
    test: intervalTest({ inTolerance, total, targetReliability, confidence }),
    exponential: exponentialInterval(history, targetReliability, confidence),
  };
}

/** Staircase parameters (ILAC-G24 / OIML D 10:2022 §“staircase”): all explicit. */
export interface StaircaseInput {
  intervalDays: number;
  /** Largest |as-found error| as a fraction of the tolerance (1 = at the limit). */
  asFoundFractionOfTolerance: number;
  /** Extend when the as-found fraction is at or below this (e.g. 0.5: "well inside"). */
  extendAtOrBelow: number;
  /** Multiply the interval by this when extending (e.g. 1.25). */
  extendFactor: number;
  /** Multiply the interval by this when found out of tolerance (e.g. 0.5). */
  shortenFactor: number;
  minDays: number;
  maxDays: number;
}

/** Staircase outcome. */
export interface StaircaseResult {
  action: 'extend' | 'keep' | 'shorten';
  recommendedDays: number;
}

/**
 * Staircase method: extend when found well inside the limit, shorten when found outside it,
 * otherwise keep; the result is bounded to [minDays, maxDays].
 */
export function staircaseInterval(s: StaircaseInput): StaircaseResult {
  let action: StaircaseResult['action'] = 'keep';
  let days = s.intervalDays;
  if (s.asFoundFractionOfTolerance > 1) {
    action = 'shorten';
    days *= s.shortenFactor;
  } else if (s.asFoundFractionOfTolerance <= s.extendAtOrBelow) {
    action = 'extend';
    days *= s.extendFactor;
  }
  return { action, recommendedDays: Math.min(s.maxDays, Math.max(s.minDays, days)) };
}
