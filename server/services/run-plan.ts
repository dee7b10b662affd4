/**
 * A run's plan, frozen at start into `runs.plan`: the instrument as used, the points and the
 * settings; the test points of each kind of run and the capture engine's settings come from it.
 */
import { buildPlan, cutoffOfSetting, type CutoffSetting, DECISION_RULES, isPressureUnitId, span, trimPlan, type Cutoff, type DecisionRule, type PlanPoint, type PressureUnitId, type TransferSpec } from '../../shared/calc';
import { PrimaryElementSchema, type PrimaryElement } from '../../shared/schemas/instruments';
import type { RunKind, StartRunBody } from '../../shared/schemas/runs';
import { DEFAULT_OVERRANGE_MARGIN_PCT, type SiteSettings } from '../../shared/schemas/settings';
import type { EngineRunSettings } from '../bench/capture-run';
import type { InstrumentRow } from '../db/repositories/register.repository';
import { badRequest } from '../errors';

/** Frozen at start, stored in `runs.plan`. */
export interface FrozenPlan {
  benchId: string;
  trim: string | null;
  unit: string;
  holdSeconds: number;
  windowPctOfSpan: number;
  decisionRule: DecisionRule;
  instrument: CutoffSetting & {
    id: string;
    tag: string;
    lrv: number;
    urv: number;
    unit: string;
    tolerancePct: number;
    /** Orifice primary element as registered at start (parsed with PrimaryElementSchema); absent on older runs. */
    primaryElement?: PrimaryElement | null;
  };
  standardIds: string[];
  points: PlanPoint[];
  warnings: string[];
  /** Coverage and decision settings frozen at start (site settings); absent on older runs (defaults). */
  coverage?: { coverageProbability?: number; coverageFactor?: number; minimumTur?: number };
  /** The technician who started the run (absent on runs started before it was recorded: see `runs.started_by`). */
  performer?: { id: string; email: string };
  /** Over-range warning margin above the URV, % of span (site setting frozen at start); absent on older runs (default). */
  overrangeMarginPct?: number;
}

export function cutoffOf(i: FrozenPlan['instrument']): Cutoff {
  return cutoffOfSetting(i);
}

export function specOf(i: FrozenPlan['instrument']): TransferSpec {
  return { range: { lrv: i.lrv, urv: i.urv, unit: i.unit as PressureUnitId }, mode: i.outputMode, cutoff: cutoffOf(i) };
}

/** The test points of a run of `kind` (a mode check at 25 % DP, the trim points, or the standard up-and-down plan). */
export function planFor(kind: RunKind, trim: StartRunBody['trim'], inst: FrozenPlan['instrument'], windowPctOfSpan: number): { points: PlanPoint[]; warnings: string[] } {
  const spec = specOf(inst);
  if (kind === 'mode-check') {
    const r = buildPlan(spec, { kind: 'custom', points: [{ nominalPct: 25, basis: 'dp', approach: 'up' }], windowPctOfSpan });
    if (!r.ok) throw badRequest(`Cannot plan the mode check: ${r.reason}`);
    return { points: r.value, warnings: [] };
  }
  if (kind === 'trim') {
    const t = trimPlan(spec);
    const steps = trim ? t.steps.filter((s) => s.kind === trim) : t.steps;
    if (!steps.length) throw badRequest(`A ${trim} does not apply to a ${inst.outputMode} output; use ${t.steps.map((s) => s.kind).join(' and ')}`);
    const r = buildPlan(spec, { kind: 'custom', points: steps.map((s) => ({ nominalPct: s.dpPct, basis: 'dp' as const, approach: 'up' as const })), windowPctOfSpan });
    if (!r.ok) throw badRequest(`Cannot plan the trim: ${r.reason}`);
    return { points: r.value, warnings: t.warnings };
  }
  const r = buildPlan(spec, { kind: 'standard', windowPctOfSpan });
  if (!r.ok) throw badRequest(`Cannot plan the run: ${r.reason}`);
  return { points: r.value, warnings: [] };
}

/** The capture engine's settings for a run: the DP span and the over-range limit above the URV. */
export function engineSettings(runId: string, p: FrozenPlan, performer: { id: string; email: string } | null): EngineRunSettings {
  const dpSpan = Math.abs(span(specOf(p.instrument).range));
  const overrangeAbove = Math.max(p.instrument.lrv, p.instrument.urv) + ((p.overrangeMarginPct ?? DEFAULT_OVERRANGE_MARGIN_PCT) / 100) * dpSpan;
  return { runId, benchId: p.benchId, unit: p.unit, dpSpan, holdSeconds: p.holdSeconds, performer, overrangeAbove };
}

/** A plan point as the run's API shows it. */
export function planFields(pp: PlanPoint) {
  return { index: pp.index, nominalPct: pp.nominalPct, basis: pp.basis, dpPct: pp.dpPct, targetDp: pp.targetDp, expectedMa: pp.expectedMa, approach: pp.approach, window: pp.window };
}

const DEFAULT_HOLD_SECONDS = 30;

/** What a run's plan is frozen from at its start. */
export interface PlanInputs {
  inst: InstrumentRow;
  site: SiteSettings;
  /** HOLD_SECONDS from the environment; wins over the site setting when it differs from the default 30 s. */
  envHoldSeconds: number;
  benchId: string;
  body: StartRunBody;
  standardIds: string[];
  performer: { id: string; email: string };
}

/**
 * The plan of a new run: the instrument as used, its test points and the site's settings (hold
 * time, decision rule, window, coverage, over-range margin) as they are now.
 */
export function freezePlan(a: PlanInputs): FrozenPlan {
  if (!isPressureUnitId(a.inst.unit)) throw badRequest(`The instrument's unit '${a.inst.unit}' is not a pressure unit`);
  const holdSeconds = a.envHoldSeconds !== DEFAULT_HOLD_SECONDS ? a.envHoldSeconds : (Number(a.site.holdSeconds) > 0 ? Number(a.site.holdSeconds) : DEFAULT_HOLD_SECONDS);
  const decisionRule = (DECISION_RULES as readonly string[]).includes(a.site.decisionRule ?? '') ? (a.site.decisionRule as DecisionRule) : 'guard-band';
  const windowPctOfSpan = Number(a.site.windowPctOfSpan) > 0 ? Number(a.site.windowPctOfSpan) : 0.5;
  const instrument: FrozenPlan['instrument'] = {
    id: a.inst.id,
    tag: a.inst.tag,
    lrv: a.inst.lrv,
    urv: a.inst.urv,
    unit: a.inst.unit,
    outputMode: a.inst.outputMode,
    cutoffMode: a.inst.cutoffMode,
    cutoffValue: a.inst.cutoffValue,
    tolerancePct: a.inst.tolerancePct,
    primaryElement: PrimaryElementSchema.nullable().catch(null).parse(a.inst.primaryElement ?? null),
  };
  const { points, warnings } = planFor(a.body.kind, a.body.trim, instrument, windowPctOfSpan);
  const coverage = { coverageProbability: a.site.coverageProbability, coverageFactor: a.site.coverageFactor, minimumTur: a.site.minimumTur };
  return { benchId: a.benchId, trim: a.body.trim ?? null, unit: a.inst.unit, holdSeconds, windowPctOfSpan, decisionRule, instrument, standardIds: a.standardIds, points, warnings, performer: a.performer, coverage, overrangeMarginPct: a.site.overrangeMarginPct ?? DEFAULT_OVERRANGE_MARGIN_PCT };
}
