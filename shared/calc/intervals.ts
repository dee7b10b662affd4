/**
 * Drift and calibration-interval methods: drift per interval (as-found(k) − as-left(k−1)),
 * linear-trend prediction, NCSLI RP-1 (2010) Method A3 interval test, and the ILAC-G24 /
 * OIML D 10:2022 staircase method. All parameters are explicit. Times in ms (passed in).
 */

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

/** Input of the A3 interval test. */
export interface IntervalTestInput {
  /** Current interval, days. */
  intervalDays: number;
  /** Calibrations found in tolerance at (about) this interval. */
  inTolerance: number;
  /** Calibrations at this interval. */
  total: number;
  /** End-of-period reliability target, 0–1 (e.g. 0.95). */
  targetReliability: number;
  /** Two-sided confidence of the test, 0–1 (e.g. 0.5). */
  confidence: number;
  /** Largest allowed change factor of the interval (e.g. 2: at most double or halve). */
  maxChangeFactor: number;
  /**
   * How a failed interval is moved (see {@link intervalTestA3}). Default `'limit-midpoint'`.
   * - `'limit-midpoint'`: extrapolate from the confidence limit nearest the target, then move
   *   halfway from the current interval to that value;
   * - `'observed'`: extrapolate from the observed reliability x/n all the way.
   */
  adjustment?: 'limit-midpoint' | 'observed';
}

/** Result of the A3 interval test. */
export interface IntervalTestResult {
  observedReliability: number;
  lower: number;
  upper: number;
  /** True when the target lies inside the confidence limits: keep the interval. */
  passes: boolean;
  /** Recommended interval, days (the current one when the test passes). */
  recommendedDays: number;
}

/**
 * NCSLI RP-1 (2010) Method A3, the interval test: two-sided binomial (Clopper–Pearson) confidence
 * limits of the observed reliability x/n at the given confidence; if the target R* lies inside
 * them the interval passes and is kept. If not, the interval is moved with the exponential
 * reliability model R(t) = exp(−λt), under which the interval that gives R* from an interval I
 * that gave R is I·ln(R*) / ln(R) (the model usual for these methods; from memory, not quoted).
 *
 * Which R, and how far to move, is the `adjustment` setting. The default, `'limit-midpoint'`,
 * takes R at the confidence limit nearest R* (the least change the data force) and moves halfway
 * from I toward that interval. It is our reconstruction: it reproduces the published tutorial
 * case (2019 NCSL International symposium interval tutorial: 15 of 20 in tolerance at 365 days,
 * R* = 0.95, confidence 0.5 → about 231 days; this gives 232) but RP-1's own text was not
 * available to us, so the rule is not quoted from it. `'observed'` extrapolates from x/n all the
 * way (65 days in that case), the harsher reading. Either is bounded by `maxChangeFactor`; an
 * observed reliability of 0 or 1 uses the nearest limit in both modes.
 */
export function intervalTestA3(i: IntervalTestInput): IntervalTestResult {
  if (!(i.total > 0 && i.inTolerance >= 0 && i.inTolerance <= i.total)) throw new RangeError('need 0 ≤ inTolerance ≤ total, total > 0');
  if (!(i.targetReliability > 0 && i.targetReliability < 1)) throw new RangeError('target reliability must be in (0, 1)');
  if (!(i.maxChangeFactor >= 1)) throw new RangeError('maxChangeFactor must be ≥ 1');
  const r = i.inTolerance / i.total;
  const { lower, upper } = binomialLimits(i.inTolerance, i.total, i.confidence);
  const passes = i.targetReliability >= lower && i.targetReliability <= upper;
  let rec = i.intervalDays;
  if (!passes) {
    const nearest = i.targetReliability > upper ? upper : lower;
    const mode = i.adjustment ?? 'limit-midpoint';
    const rUse = mode === 'observed' && r > 0 && r < 1 ? r : nearest;
    let moved: number;
    if (rUse <= 0) moved = 0;
    else if (rUse >= 1) moved = Infinity;
    else moved = (i.intervalDays * Math.log(i.targetReliability)) / Math.log(rUse);
    rec = mode === 'observed' ? moved : (i.intervalDays + moved) / 2;
    rec = Math.min(i.intervalDays * i.maxChangeFactor, Math.max(i.intervalDays / i.maxChangeFactor, rec));
  }
  return { observedReliability: r, lower, upper, passes, recommendedDays: rec };
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
