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

/**
 * Decision outcomes. Binary rules use pass and fail; the non-binary rule adds the conditional
 * states; any rule says `undecided` (with its reason) when it cannot decide: a guard-banded rule
 * without an expanded uncertainty, a TUR below the rule's minimum, a reading out of range. A rule
 * never falls back silently to another rule.
 */
export const DECISIONS = ['pass', 'conditional-pass', 'conditional-fail', 'undecided', 'fail'] as const;
export type Decision = (typeof DECISIONS)[number];

/**
 * Severity order for combining decisions: pass < conditional-pass < conditional-fail < undecided
 * < fail. A failed point fails the whole; otherwise one point that cannot be decided leaves the
 * whole undecided.
 */
export const DECISION_SEVERITY: Readonly<Record<Decision, number>> = { pass: 0, 'conditional-pass': 1, 'conditional-fail': 2, undecided: 3, fail: 4 };

/** Why a decision is `undecided`. */
export type UndecidedReason = 'uncertainty-unknown' | 'tur-below-minimum' | 'reading-out-of-range';

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
  /** Guard band w used (same unit as the error); null when undecided for want of U. */
  guardBand: number | null;
  /** Acceptance limits [T_L + w, T_U − w]; null when the guard band is unknown. */
  acceptanceLower: number | null;
  acceptanceUpper: number | null;
  /** Set when `decision` is `undecided`. */
  undecided: { reason: UndecidedReason; message: string } | null;
}

/** Options of {@link applyDecisionRule}. */
export interface DecisionOptions {
  /**
   * Minimum TUR the rule is used at (a site setting; none by default). Below it, or with U
   * unknown, the rule does not decide. Z540.3 §5.3 names TUR ≥ 4 as the customary fallback where
   * the false-accept probability is not computed.
   */
  minimumTur?: number;
}

/** Rules whose acceptance limits depend on U. */
export function ruleNeedsUncertainty(rule: DecisionRule): boolean {
  return rule !== 'simple';
}

/**
 * Apply a decision rule to a measured error y with tolerance limits [lower, upper] and expanded
 * uncertainty U95 (about 95 % coverage), all in the same unit. Values on a limit count as inside it.
 * simple: w = 0. guard-band: w = U (ILAC-G8 §4.2.2, specific risk < 2.5 % at the limit).
 * non-binary: pass inside [T_L + U, T_U − U], conditional pass up to the limit, conditional fail
 * within U beyond it, fail further out (ILAC-G8 §4.2.3). managed-guard-band: w = U·M (Dobbert).
 * `undecided` when a rule that needs U has none (`u95` undefined or null), or when the TUR is
 * below `options.minimumTur` (or cannot be computed while a minimum is set).
 */
export function applyDecisionRule(
  rule: DecisionRule,
  y: number,
  lower: number,
  upper: number,
  u95: number | null | undefined,
  options: DecisionOptions = {},
): DecisionResult {
  if (!(upper > lower)) throw new RangeError('tolerance upper limit must exceed the lower');
  if (u95 !== null && u95 !== undefined && !(u95 >= 0)) throw new RangeError('U95 must be ≥ 0');
  const undecided = (reason: UndecidedReason, message: string, w: number | null): DecisionResult => ({
    decision: 'undecided',
    guardBand: w,
    acceptanceLower: w === null ? null : lower + w,
    acceptanceUpper: w === null ? null : upper - w,
    undecided: { reason, message },
  });
  const known = u95 !== null && u95 !== undefined;
  if (!known && ruleNeedsUncertainty(rule)) {
    return undecided('uncertainty-unknown', `the ${rule} rule needs the expanded uncertainty, which could not be computed`, null);
  }
  const minTur = options.minimumTur;
  if (minTur !== undefined) {
    const tur = known ? testUncertaintyRatio(lower, upper, u95) : undefined;
    if (tur === undefined) return undecided('uncertainty-unknown', `TUR cannot be computed and the rule requires TUR ≥ ${minTur}`, known ? 0 : null);
    if (tur < minTur) return undecided('tur-below-minimum', `TUR ${tur.toFixed(2)} is below the rule's minimum of ${minTur}`, null);
  }
  const U = known ? u95 : 0;
  let w = 0;
  if (rule === 'guard-band' || rule === 'non-binary') w = U;
  else if (rule === 'managed-guard-band') {
    const tur = testUncertaintyRatio(lower, upper, U);
    w = tur === undefined ? 0 : U * dobbertMultiplier(tur);
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
  return { decision, guardBand: w, acceptanceLower: aL, acceptanceUpper: aU, undecided: null };
}

/** The most severe of a list of decisions; `undefined` for an empty list. */
export function worstDecision(ds: readonly Decision[]): Decision | undefined {
  let w: Decision | undefined;
  for (const d of ds) if (w === undefined || DECISION_SEVERITY[d] > DECISION_SEVERITY[w]) w = d;
  return w;
}
