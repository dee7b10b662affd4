/**
 * One-call evaluation of a calibration from per-point readings (used by `POST /api/calc/evaluate`):
 * results, GUM uncertainty, TUR, decision and conformance probability per point, then hysteresis,
 * non-linearity, worst error and the overall decision. Input and output are plain JSON-friendly
 * types (no Infinity: unbounded degrees of freedom are reported as null).
 */
import { applyDecisionRule, conformanceProbability, testUncertaintyRatio, worstDecision, type Decision, type DecisionRule } from './decision';
import type { Direction, NominalBasis } from './plan';
import { hysteresis, nonLinearity, pointResult, worstError, type HysteresisResult, type NonLinearity } from './results';
import { classifyNe43, isRootedOutput, type Cutoff, type Ne43Class, type OutputMode, type TransferSpec } from './transfer';
import { pointBudget, type CurrentMeterSpec, type PressureReferenceSpec } from './uncertainty';
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
}

/** One reading per point (means over the hold). */
export interface EvaluateReading {
  nominalPct: number;
  /** Basis of `nominalPct`; default 'flow' for a rooted output, else 'dp'. */
  basis?: NominalBasis;
  direction: Direction;
  /** Mean applied DP, instrument unit. */
  appliedDp: number;
  /** Mean measured current, mA. */
  measuredMa: number;
  /** Standard deviation of the applied DP over the hold, instrument unit. */
  appliedDpSd?: number;
  /** Standard deviation of the current over the hold, mA. */
  measuredMaSd?: number;
  /** Samples over the hold. */
  n?: number;
}

/** Input of {@link evaluateCalibration}. */
export interface EvaluateInput {
  instrument: EvaluateInstrument;
  standards: { pressure: PressureReferenceSpec; current: CurrentMeterSpec };
  decisionRule: DecisionRule;
  readings: EvaluateReading[];
  /** Coverage factor; default 2. */
  coverageFactor?: number;
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
  errorPctSpan: number;
  /** DP-equivalent error, instrument unit; null inside a clamp cutoff. */
  dpEquivalentError: number | null;
  /** Expanded uncertainty (k = coverageFactor), % of output span; null when it cannot be computed. */
  expandedUncertaintyPctSpan: number | null;
  expandedUncertaintyMa: number | null;
  coverageFactor: number;
  /** Welch–Satterthwaite ν_eff; null when infinite or not computed. */
  effectiveDof: number | null;
  tur: number | null;
  decision: Decision;
  /** Acceptance limit (tolerance minus guard band), ± % of span. */
  acceptanceLimitPctSpan: number;
  /** JCGM 106 conformance probability, 0–1; null without an uncertainty. */
  conformanceProbability: number | null;
  ne43: Ne43Class;
}

/** Output of {@link evaluateCalibration}. */
export interface EvaluateOutput {
  points: EvaluatePoint[];
  hysteresis: HysteresisResult[];
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
  const k = input.coverageFactor ?? 2;
  if (!(k > 0)) return { ok: false, reason: 'coverage factor must be > 0' };
  const spec: TransferSpec = { range: { lrv: ins.lrv, urv: ins.urv, unit: ins.unit }, mode: ins.outputMode, cutoff };
  const T = ins.tolerancePctSpan;
  const defaultBasis: NominalBasis = isRootedOutput(ins.outputMode) ? 'flow' : 'dp';
  const captured = input.readings.map((r) => ({ ...r, basis: r.basis ?? defaultBasis }));
  for (const [i, r] of captured.entries()) {
    if (![r.nominalPct, r.appliedDp, r.measuredMa].every(Number.isFinite)) return { ok: false, reason: `reading ${i}: non-numeric value` };
  }
  const points: EvaluatePoint[] = captured.map((r, index) => {
    const res = pointResult(spec, r);
    const budget = pointBudget(spec, r, input.standards.pressure, input.standards.current, k);
    // The decision rules are defined for U95; with k ≠ 2 the expanded value given is used as is.
    const U = budget?.expandedPctSpan;
    const dec = applyDecisionRule(input.decisionRule, res.errorPctSpan, -T, T, U ?? 0);
    const tur = U === undefined ? undefined : testUncertaintyRatio(-T, T, U);
    const ne43 = classifyNe43(r.measuredMa);
    // An NE 43 failure current is a failed point whatever the arithmetic says.
    const decision = ne43.isFailure ? 'fail' : dec.decision;
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
      dpEquivalentError: res.dpEquivalentError ?? null,
      expandedUncertaintyPctSpan: U ?? null,
      expandedUncertaintyMa: budget?.expandedMa ?? null,
      coverageFactor: k,
      effectiveDof: budget && Number.isFinite(budget.effectiveDof) ? budget.effectiveDof : null,
      tur: tur ?? null,
      decision,
      acceptanceLimitPctSpan: dec.acceptanceUpper,
      conformanceProbability: u === undefined ? null : conformanceProbability(res.errorPctSpan, -T, T, u),
      ne43: ne43.class,
    };
  });
  const errors = points.map((p) => p.errorPctSpan);
  const hyst = hysteresis(captured, errors);
  const overall = worstDecision(points.map((p) => p.decision)) ?? 'fail';
  return {
    ok: true,
    value: {
      points,
      hysteresis: hyst,
      maxHysteresisPctSpan: hyst.length ? Math.max(...hyst.map((h) => h.hysteresisPctSpan)) : null,
      nonLinearity: nonLinearity(spec, captured, errors) ?? null,
      worstError: worstError(errors) ?? null,
      overallDecision: overall,
    },
  };
}
