/**
 * Student's t distribution and the coverage factor from effective degrees of freedom.
 *
 * GUM (JCGM 100:2008) G.3 and G.4: the expanded uncertainty U = k·u_c with k = t_p(ν_eff), the
 * two-sided Student's t quantile for coverage probability p at the Welch–Satterthwaite effective
 * degrees of freedom ν_eff (G.4.1; ν_eff need not be an integer, G.4.1 note 1 allows truncation,
 * we interpolate by computing the quantile at the real ν, which is what the t distribution
 * defines). For ν = ∞ the t distribution is the normal one.
 *
 * Method: the t CDF through the regularised incomplete beta function,
 * P(|T| ≤ t) = 1 − I_x(ν/2, 1/2) with x = ν/(ν + t²) (Abramowitz & Stegun 26.7.1 with 26.5.27),
 * I_x by its continued fraction (A&S 26.5.8) with the modified Lentz method, and the quantile by
 * bisection on that CDF to 1e-12 relative (monotone, so it always converges).
 */
import { normalCdf } from './normal';

function logGamma(x: number): number {
  // Lanczos approximation, g = 7, n = 9 (coefficients as published by Godfrey; relative error < 1e-15).
  const c = [
    0.99999999999980993, 676.5203681218851, -1259.1392167224028, 771.32342877765313, -176.61502916214059, 12.507343278686905,
    -0.13857109526572012, 9.9843695780195716e-6, 1.5056327351493116e-7,
  ];
  if (x < 0.5) return Math.log(Math.PI / Math.abs(Math.sin(Math.PI * x))) - logGamma(1 - x);
  const z = x - 1;
  let a = c[0]!;
  const t = z + 7.5;
  for (let i = 1; i < 9; i++) a += c[i]! / (z + i);
  return 0.5 * Math.log(2 * Math.PI) + (z + 0.5) * Math.log(t) - t + Math.log(a);
}

/** Continued fraction of the incomplete beta function (A&S 26.5.8), modified Lentz. */
function betaContinuedFraction(a: number, b: number, x: number): number {
  const tiny = 1e-300;
  let c = 1;
  let d = 1 - ((a + b) * x) / (a + 1);
  if (Math.abs(d) < tiny) d = tiny;
  d = 1 / d;
  let h = d;
  for (let m = 1; m < 10_000; m++) {
    const m2 = 2 * m;
    let aa = (m * (b - m) * x) / ((a + m2 - 1) * (a + m2));
    d = 1 + aa * d;
    if (Math.abs(d) < tiny) d = tiny;
    c = 1 + aa / c;
    if (Math.abs(c) < tiny) c = tiny;
    d = 1 / d;
    h *= d * c;
    aa = (-(a + m) * (a + b + m) * x) / ((a + m2) * (a + m2 + 1));
    d = 1 + aa * d;
    if (Math.abs(d) < tiny) d = tiny;
    c = 1 + aa / c;
    if (Math.abs(c) < tiny) c = tiny;
    d = 1 / d;
    const del = d * c;
    h *= del;
    if (Math.abs(del - 1) < 1e-16) break;
  }
  return h;
}

/** Regularised incomplete beta function I_x(a, b), 0 ≤ x ≤ 1, a, b > 0. */
export function regularizedIncompleteBeta(x: number, a: number, b: number): number {
  if (!(x >= 0 && x <= 1)) return NaN;
  if (x === 0) return 0;
  if (x === 1) return 1;
  const lbt = logGamma(a + b) - logGamma(a) - logGamma(b) + a * Math.log(x) + b * Math.log(1 - x);
  const bt = Math.exp(lbt);
  // The continued fraction converges fast for x < (a + 1)/(a + b + 2); use the symmetry otherwise.
  if (x < (a + 1) / (a + b + 2)) return (bt * betaContinuedFraction(a, b, x)) / a;
  return 1 - (bt * betaContinuedFraction(b, a, 1 - x)) / b;
}

/**
 * Two-sided probability P(|T| ≤ t) of Student's t with ν degrees of freedom (ν > 0, may be
 * non-integer; ν = Infinity gives the normal distribution).
 */
export function studentTCentralProbability(t: number, nu: number): number {
  if (!(nu > 0)) throw new RangeError(`degrees of freedom ${nu} must be > 0`);
  const at = Math.abs(t);
  if (at === Infinity) return 1;
  if (nu === Infinity) return 2 * normalCdf(at) - 1;
  return 1 - regularizedIncompleteBeta(nu / (nu + at * at), nu / 2, 0.5);
}

/**
 * The coverage probability the GUM tables write as 95.45 %: exactly the probability of a normal
 * variable within ±2σ, 2Φ(2) − 1 = 0.954499736… (JCGM 100:2008 Table G.1: p = 95.45 % ⇔ k = 2).
 */
export const P_TWO_SIGMA = 2 * normalCdf(2) - 1;

/** Default coverage probability, 95.45 % (JCGM 100:2008 G.1.3, Table G.1). */
export const DEFAULT_COVERAGE_PROBABILITY = 0.9545;

/**
 * A probability given as 95.45 % is taken as the ±2σ probability it rounds (Table G.1), so that
 * the default coverage gives k = 2 exactly at ν = ∞.
 */
function normaliseP(p: number): number {
  return Math.abs(p - 0.9545) < 5e-7 ? P_TWO_SIGMA : p;
}

/**
 * Two-sided Student's t quantile t_p(ν): the value with P(|T| ≤ t_p) = p (JCGM 100:2008 G.3,
 * Table G.2). ν may be non-integer; ν = Infinity gives the normal quantile.
 * @param p coverage probability, 0 < p < 1
 * @param nu degrees of freedom, > 0
 */
export function studentTQuantile(p: number, nu: number): number {
  if (!(p > 0 && p < 1)) throw new RangeError(`coverage probability ${p} must be in (0, 1)`);
  if (!(nu > 0)) throw new RangeError(`degrees of freedom ${nu} must be > 0`);
  const q = normaliseP(p);
  let lo = 0;
  let hi = 1;
  while (studentTCentralProbability(hi, nu) < q) {
    hi *= 2;
    if (hi > 1e12) return Infinity;
  }
  for (let i = 0; i < 200 && hi - lo > 1e-12 * hi; i++) {
    const mid = 0.5 * (lo + hi);
    if (studentTCentralProbability(mid, nu) < q) lo = mid;
    else hi = mid;
  }
  return 0.5 * (lo + hi);
}

/**
 * How the coverage factor is chosen (a site setting).
 * - `probability`: k = t_p(ν_eff) for coverage probability p (default 95.45 %), GUM G.3–G.4;
 *   k = z_p when ν_eff is infinite (every term Type B).
 * - `fixed`: the site fixes k (e.g. k = 2 by its procedure); the coverage probability is then
 *   only approximately 95 % and smaller when ν_eff is small.
 */
export type CoveragePolicy = { mode: 'probability'; probability: number } | { mode: 'fixed'; k: number };

/** Default coverage policy: p = 95.45 % with k from ν_eff. */
export const DEFAULT_COVERAGE_POLICY: CoveragePolicy = { mode: 'probability', probability: DEFAULT_COVERAGE_PROBABILITY };

/**
 * Coverage factor for a policy at ν_eff (Infinity when every term is Type B).
 * @returns k, dimensionless
 */
export function coverageFactor(policy: CoveragePolicy, effectiveDof: number): number {
  if (policy.mode === 'fixed') {
    if (!(policy.k > 0)) throw new RangeError('fixed coverage factor must be > 0');
    return policy.k;
  }
  return studentTQuantile(policy.probability, effectiveDof);
}
