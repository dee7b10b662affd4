/**
 * One-call evaluation of a calibration from per-point readings (used by `POST /api/calc/evaluate`):
 * results, GUM uncertainty, TUR, decision and conformance probability per point, then hysteresis,
 * non-linearity, worst error and the overall decision. Input and output are plain JSON-friendly
 * types (no Infinity: unbounded degrees of freedom are reported as null).
 */
import { applyDecisionRule, conformanceProbability, testUncertaintyRatio, worstDecision, type Decision, type DecisionRule, type UndecidedReason } from './decision';
import type { Direction, NominalBasis } from './plan';
import { hysteresis, nonLinearity, pointResult, worstError, type HysteresisResult, type NonLinearity } from './results';
import { pointFlow, type FlowUnit, type OrificeSpec, type PointFlow } from './orifice';
import { convertPressure } from './units';
import { classifyNe43, isRootedOutput, type Cutoff, type Ne43Class, type OutputMode, type TransferSpec } from './transfer';
import { DEFAULT_COVERAGE_PROBABILITY, type CoveragePolicy } from './student-t';
import { pointBudget, type BudgetPoint, type CurrentMeterSpec, type PressureReferenceSpec } from './uncertainty';
import { isPressureUnitId, type PressureUnitId } from './units';

/** Instrument data for an evaluation. */
export interface EvaluateInstrument {
  lrv: number;
  urv: number;
  unit: PressureUnitId;
  outputMode: OutputMode;
  /** Low-flow cutoff mode; default 'none'. Ignored for a linear output. */
  cutoffMode?: 'none' | 'clamp' | 'linear';
  /** Clamp: cutoff in % flow. Linear: breakpoint in % DP. */
  cutoffValue?: number;
  /** Tolerance, ± % of output span (of flow span for a rooted output). */
  tolerancePctSpan: number;
  /**
   * Orifice primary element (ISO 5167-2) and the unit to show flow in; when given, each point
   * carries the flow at its applied DP in that unit, with C and ε used.
   */
  primaryElement?: { spec: OrificeSpec; flowUnit: FlowUnit } | null;
}

/** One reading per point: the means over the hold and their spread, as the budget takes them ({@link BudgetPoint}). */
export interface EvaluateReading extends BudgetPoint {
  nominalPct: number;
  /** Basis of `nominalPct`; default 'flow' for a rooted output, else 'dp'. */
  basis?: NominalBasis;
  direction: Direction;
}

/** Input of {@link evaluateCalibration}. */
export interface EvaluateInput {
  instrument: EvaluateInstrument;
  standards: { pressure: PressureReferenceSpec; current: CurrentMeterSpec };
  decisionRule: DecisionRule;
  readings: EvaluateReading[];
  /**
   * A coverage factor the site fixes (e.g. 2 by its procedure). When absent, k = t_p(ν_eff) for
   * `coverageProbability` (GUM G.3–G.4).
   */
  coverageFactor?: number;
  /** Coverage probability for k from ν_eff, 0–1; default 0.9545 (95.45 %). */
  coverageProbability?: number;
  /** Minimum TUR for a decision (site setting; none by default); below it a point is undecided. */
  minimumTur?: number;
}

/** Per-point output. */
export interface EvaluatePoint {
  index: number;
  nominalPct: number;
  basis: NominalBasis;
  direction: Direction;
  appliedDp: number;
  appliedDpPct: number;
  /** Flow % from the actual applied DP; null for a linear instrument. */
  appliedFlowPct: number | null;
  expectedMa: number;
  measuredMa: number;
  /** (I_meas − I_exp)/16 mA × 100, % of the output span named by `errorBasis`. */
  errorPctSpan: number;
  /** What `errorPctSpan` is a percentage of: the flow span for a rooted output, else the DP span. */
  errorBasis: ErrorBasis;
  /** DP-equivalent error, instrument unit; null inside a clamp cutoff. */
  dpEquivalentError: number | null;
  /** Expanded uncertainty U = k·u_c, % of output span; null when it cannot be computed. */
  expandedUncertaintyPctSpan: number | null;
  expandedUncertaintyMa: number | null;
  /** Coverage factor k used for U; null when U cannot be computed. */
  coverageFactor: number | null;
  /** Coverage probability k was computed for (0–1); null when the site fixes k or U is unknown. */
  coverageProbability: number | null;
  /** Welch–Satterthwaite ν_eff; null when infinite or not computed. */
  effectiveDof: number | null;
  tur: number | null;
  decision: Decision;
  /** Why the point is undecided (null otherwise). */
  undecided: { reason: UndecidedReason; message: string } | null;
  /** Acceptance limit (tolerance minus guard band), ± % of span; null when the guard band is unknown. */
  acceptanceLimitPctSpan: number | null;
  /** JCGM 106 conformance probability, 0–1; null without an uncertainty. */
  conformanceProbability: number | null;
  ne43: Ne43Class;
  /** Flow in engineering units at the applied DP (orifice primary element), or null. */
  flow: PointFlow | null;
}

/** Basis of an error in % of output span. */
export type ErrorBasis = 'flow-span' | 'dp-span';

/** Output of {@link evaluateCalibration}. */
export interface EvaluateOutput {
  points: EvaluatePoint[];
  /** Basis of every % of span figure below (flow span for a rooted output, else DP span). */
  errorBasis: ErrorBasis;
  /** Per nominal: error up minus error down, % of output span (signed). */
  hysteresis: HysteresisResult[];
  /** Largest |hysteresis|, % of output span; null without an up/down pair. */
  maxHysteresisPctSpan: number | null;
  nonLinearity: NonLinearity | null;
  worstError: { index: number; errorPctSpan: number } | null;
  overallDecision: Decision;
}

/** Result union of {@link evaluateCalibration}. */
export type EvaluateResult = { ok: true; value: EvaluateOutput } | { ok: false; reason: string };

function cutoffOf(i: EvaluateInstrument): Cutoff | string {
  const m = i.cutoffMode ?? 'none';
  if (m === 'none' || i.outputMode === 'linear') return { mode: 'none' };
  const v = i.cutoffValue;
  if (v === undefined || !Number.isFinite(v) || v <= 0) return `cutoff mode '${m}' needs a positive cutoffValue`;
  return m === 'clamp' ? { mode: 'clamp', flowPct: v } : { mode: 'linear', breakpointDpPct: v };
}

/** Evaluate a calibration; `{ ok: false, reason }` for input it cannot compute from. */
export function evaluateCalibration(input: EvaluateInput): EvaluateResult {
  const ins = input.instrument;
  if (!isPressureUnitId(ins.unit)) return { ok: false, reason: `unknown unit '${String(ins.unit)}'` };
  if (!Number.isFinite(ins.lrv) || !Number.isFinite(ins.urv) || ins.lrv === ins.urv) return { ok: false, reason: 'LRV and URV must be finite and different' };
  if (!(ins.tolerancePctSpan > 0)) return { ok: false, reason: 'tolerance must be > 0 % of span' };
  if (input.readings.length === 0) return { ok: false, reason: 'no readings' };
  const cutoff = cutoffOf(ins);
  if (typeof cutoff === 'string') return { ok: false, reason: cutoff };
  let coverage: CoveragePolicy;
  if (input.coverageFactor !== undefined) {
    if (!(input.coverageFactor > 0)) return { ok: false, reason: 'coverage factor must be > 0' };
    coverage = { mode: 'fixed', k: input.coverageFactor };
  } else {
    const p = input.coverageProbability ?? DEFAULT_COVERAGE_PROBABILITY;
    if (!(p > 0.5 && p < 1)) return { ok: false, reason: 'coverage probability must be between 0.5 and 1' };
    coverage = { mode: 'probability', probability: p };
  }
  const errorBasis: ErrorBasis = ins.outputMode === 'sqrt-transmitter' ? 'flow-span' : 'dp-span';
  const spec: TransferSpec = { range: { lrv: ins.lrv, urv: ins.urv, unit: ins.unit }, mode: ins.outputMode, cutoff };
  const T = ins.tolerancePctSpan;
  const defaultBasis: NominalBasis = isRootedOutput(ins.outputMode) ? 'flow' : 'dp';
  const captured = input.readings.map((r) => ({ ...r, basis: r.basis ?? defaultBasis }));
  for (const [i, r] of captured.entries()) {
    if (![r.nominalPct, r.appliedDp, r.measuredMa].every(Number.isFinite)) return { ok: false, reason: `reading ${i}: non-numeric value` };
  }
  const pe = ins.primaryElement;
  // DP is converted from the instrument unit to Pa for ISO 5167-2; the URV is the DP at 100 % flow.
  const flowAt = (dp: number): PointFlow | null => {
    if (!pe || ins.outputMode === 'linear') return null;
    const dpPa = convertPressure(dp - ins.lrv, ins.unit, 'Pa');
    const maxPa = convertPressure(ins.urv - ins.lrv, ins.unit, 'Pa');
    if (!(dpPa > 0) || !(maxPa > 0)) return null;
    return pointFlow(pe.spec, dpPa, maxPa, pe.flowUnit) ?? null;
  };
  const points: EvaluatePoint[] = captured.map((r, index) => {
    const res = pointResult(spec, r);
    const budget = pointBudget(spec, r, input.standards.pressure, input.standards.current, coverage);
    // U is for the site's coverage probability (95.45 % by default), the coverage the rules and
    // TUR are defined for. Without U a rule that needs it says undecided (never U = 0).
    const U = budget?.expandedPctSpan;
    const dec = applyDecisionRule(input.decisionRule, res.errorPctSpan, -T, T, U, { minimumTur: input.minimumTur });
    const tur = U === undefined ? undefined : testUncertaintyRatio(-T, T, U);
    const ne43 = classifyNe43(r.measuredMa);
    // An NE 43 failure current is a failed point whatever the arithmetic says; a current in a band
    // NE 43 leaves undefined (3.6–3.8 mA, 20.5–21.0 mA) is neither a reading nor a failure signal.
    let decision: Decision = dec.decision;
    let undecided = dec.undecided;
    if (ne43.isFailure) {
      decision = 'fail';
      undecided = null;
    } else if (ne43.class === 'undefined-low' || ne43.class === 'undefined-high') {
      decision = 'undecided';
      undecided = { reason: 'reading-out-of-range', message: `${r.measuredMa} mA lies in a band NAMUR NE 43 leaves undefined (3.6–3.8 mA, 20.5–21.0 mA)` };
    }
    const u = budget && budget.ucMa > 0 ? (budget.ucMa / 16) * 100 : undefined;
    return {
      index,
      nominalPct: r.nominalPct,
      basis: r.basis,
      direction: r.direction,
      appliedDp: r.appliedDp,
      appliedDpPct: res.appliedDpPct,
      appliedFlowPct: res.appliedFlowPct ?? null,
      expectedMa: res.expectedMa,
      measuredMa: r.measuredMa,
      errorPctSpan: res.errorPctSpan,
      errorBasis,
      dpEquivalentError: res.dpEquivalentError ?? null,
      expandedUncertaintyPctSpan: U ?? null,
      expandedUncertaintyMa: budget?.expandedMa ?? null,
      coverageFactor: budget?.k ?? null,
      coverageProbability: budget?.coverageProbability ?? null,
      effectiveDof: budget && Number.isFinite(budget.effectiveDof) ? budget.effectiveDof : null,
      tur: tur ?? null,
      decision,
      undecided,
      acceptanceLimitPctSpan: dec.acceptanceUpper,
      conformanceProbability: u === undefined ? null : conformanceProbability(res.errorPctSpan, -T, T, u),
      ne43: ne43.class,
      flow: flowAt(r.appliedDp),
    };
  });
  const errors = points.map((p) => p.errorPctSpan);
  const hyst = hysteresis(captured, errors);
  const overall = worstDecision(points.map((p) => p.decision)) ?? 'fail';
  return {
    ok: true,
    value: {
      points,
      errorBasis,
      hysteresis: hyst,
      maxHysteresisPctSpan: hyst.length ? Math.max(...hyst.map((h) => Math.abs(h.hysteresisPctSpan))) : null,
      nonLinearity: nonLinearity(spec, captured, errors) ?? null,
      worstError: worstError(errors) ?? null,
      overallDecision: overall,
    },
  };
}
