/**
 * Test uncertainty ratio, decision rules and conformance probability.
 *
 * TUR: ANSI/NCSL Z540.3-2006 §3.11. Decision rules: ILAC-G8:09/2019 (simple acceptance; binary
 * with guard band w = U; non-binary pass / conditional pass / conditional fail / fail) and the
 * managed guard band of the Z540.3 Handbook, method 6 (Dobbert). Conformance probability:
 * JCGM 106:2012 §7 with a normal PDF for the measurand.
 */
import { normalCdf } from './normal';

/** Decision rules. */
export const DECISION_RULES = ['simple', 'guard-band', 'non-binary', 'managed-guard-band'] as const;
/** A decision rule id. */
export type DecisionRule = (typeof DECISION_RULES)[number];

/** Decision outcomes (binary rules use only pass and fail). */
export type Decision = 'pass' | 'conditional-pass' | 'conditional-fail' | 'fail';

/** Severity order for combining decisions: pass < conditional-pass < conditional-fail < fail. */
export const DECISION_SEVERITY: Readonly<Record<Decision, number>> = { pass: 0, 'conditional-pass': 1, 'conditional-fail': 2, fail: 3 };

/**
 * TUR = (T_U − T_L)/(2·U95), Z540.3 §3.11. `undefined` when U95 ≤ 0 (cannot compute).
 * TUR ≥ 4 is the customary fallback where false-accept risk is not computed.
 */
export function testUncertaintyRatio(lower: number, upper: number, u95: number): number | undefined {
  if (!(u95 > 0)) return undefined;
  return (upper - lower) / (2 * u95);
}

/**
 * Managed guard-band multiplier M = 1.04 − exp(0.38·ln(TUR) − 0.54), Z540.3 Handbook method 6
 * (Dobbert), clamped at 0 (reached at TUR ≈ 4.6).
 */
export function dobbertMultiplier(tur: number): number {
  if (!(tur > 0)) throw new RangeError(`TUR ${tur} must be > 0`);
  return Math.max(0, 1.04 - Math.exp(0.38 * Math.log(tur) - 0.54));
}

/**
 * Conformance probability p_c = Φ((T_U − y)/u) − Φ((T_L − y)/u), JCGM 106:2012 §7.3 (normal PDF).
 * @param y measured value (best estimate)
 * @param u standard uncertainty, > 0
 */
export function conformanceProbability(y: number, lower: number, upper: number, u: number): number {
  if (!(u > 0)) throw new RangeError('standard uncertainty must be > 0');
  return normalCdf((upper - y) / u) - normalCdf((lower - y) / u);
}

/** Result of applying a decision rule. */
export interface DecisionResult {
  decision: Decision;
  /** Guard band w used (same unit as the error). */
  guardBand: number;
  /** Acceptance limits [T_L + w, T_U − w]. */
  acceptanceLower: number;
  acceptanceUpper: number;
}

/**
 * Apply a decision rule to a measured error y with tolerance limits [lower, upper] and expanded
 * uncertainty U95 (k = 2), all in the same unit. Values on a limit count as inside it.
 * simple: w = 0. guard-band: w = U (ILAC-G8 §4.2.2, specific risk < 2.5 % at the limit).
 * non-binary: pass inside [T_L + U, T_U − U], conditional pass up to the limit, conditional fail
 * within U beyond it, fail further out (ILAC-G8 §4.2.3). managed-guard-band: w = U·M (Dobbert).
 */
export function applyDecisionRule(rule: DecisionRule, y: number, lower: number, upper: number, u95: number): DecisionResult {
  if (!(upper > lower)) throw new RangeError('tolerance upper limit must exceed the lower');
  if (!(u95 >= 0)) throw new RangeError('U95 must be ≥ 0');
  let w = 0;
  if (rule === 'guard-band' || rule === 'non-binary') w = u95;
  else if (rule === 'managed-guard-band') {
    const tur = testUncertaintyRatio(lower, upper, u95);
    w = tur === undefined ? 0 : u95 * dobbertMultiplier(tur);
  }
  const aL = lower + w;
  const aU = upper - w;
  const inAcceptance = y >= aL && y <= aU;
  let decision: Decision;
  if (rule === 'non-binary') {
    if (inAcceptance) decision = 'pass';
    else if (y >= lower && y <= upper) decision = 'conditional-pass';
    else if (y >= lower - w && y <= upper + w) decision = 'conditional-fail';
    else decision = 'fail';
  } else decision = inAcceptance ? 'pass' : 'fail';
  return { decision, guardBand: w, acceptanceLower: aL, acceptanceUpper: aU };
}

/** The most severe of a list of decisions; `undefined` for an empty list. */
export function worstDecision(ds: readonly Decision[]): Decision | undefined {
  let w: Decision | undefined;
  for (const d of ds) if (w === undefined || DECISION_SEVERITY[d] > DECISION_SEVERITY[w]) w = d;
  return w;
}
