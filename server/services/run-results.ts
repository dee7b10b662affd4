/**
 * A run's results, assembled from its frozen plan, its captured points and the standards used:
 * the output-mode finding of a mode check and the evaluation of shared/calc (errors, uncertainty,
 * decision). Pure: the run service reads the points and standards and stores what this returns.
 */
import { checkOutputMode, evaluateCalibration, isPressureUnitId, type CurrentMeterSpec, type EvaluateOutput, type PressureReferenceSpec, type PressureUnitId } from '../../shared/calc';
import { orificeSpecOf } from '../../shared/schemas/instruments';
import type { Run, RunKind, RunPoint } from '../../shared/schemas/runs';
import type { StandardRow } from '../db/repositories/register.repository';
import type { FrozenPlan } from './run-plan';

/** The results of a run, or why there are none. */
export interface RunResultsView {
  results: EvaluateOutput | null;
  problem: string | null;
  modeCheck: Run['modeCheck'];
}

/** A pressure standard's accuracy as the calc's reference spec; a floor (standard's unit) is folded into % of full scale. */
export function pressureSpecOf(s: StandardRow): PressureReferenceSpec | string {
  if (!isPressureUnitId(s.unit)) return `standard ${s.serial}: unit '${s.unit}' is not a pressure unit`;
  const a = s.accuracy as { pctReading?: number; pctFullScale?: number; floor?: number; certificateU?: number | null; certificateK?: number | null };
  if (a.certificateU != null && a.certificateK != null && a.certificateK > 0) {
    return { kind: 'certificate', unit: s.unit, expandedU: a.certificateU, k: a.certificateK, resolution: s.resolution };
  }
  const fullScale = Math.max(Math.abs(s.rangeMin), Math.abs(s.rangeMax));
  const floorPct = fullScale > 0 ? ((a.floor ?? 0) / fullScale) * 100 : 0;
  return { kind: 'spec', unit: s.unit, pctOfReading: a.pctReading ?? 0, pctOfFullScale: (a.pctFullScale ?? 0) + floorPct, fullScale, resolution: s.resolution };
}

/** A current standard's accuracy as the calc's meter spec (% of full scale and a certificate U/k become an equivalent floor). */
export function currentSpecOf(s: StandardRow): CurrentMeterSpec {
  const a = s.accuracy as { pctReading?: number; pctFullScale?: number; floor?: number; certificateU?: number | null; certificateK?: number | null };
  const fullScale = Math.max(Math.abs(s.rangeMin), Math.abs(s.rangeMax));
  if (a.certificateU != null && a.certificateK != null && a.certificateK > 0) {
    // Rectangular half-width with the same standard uncertainty as U/k: a = √3·U/k.
    return { pctOfReading: 0, floorMa: (Math.sqrt(3) * a.certificateU) / a.certificateK, resolutionMa: s.resolution };
  }
  return { pctOfReading: a.pctReading ?? 0, floorMa: (a.floor ?? 0) + ((a.pctFullScale ?? 0) / 100) * fullScale, resolutionMa: s.resolution };
}

/** What a mode check found: the output mode the 25 % DP reading shows, and whether the register agrees. */
export function modeCheckOf(kind: RunKind, p: FrozenPlan, captured: readonly RunPoint[]): Run['modeCheck'] {
  if (kind !== 'mode-check' || !captured.length) return null;
  const ma = captured[0]!.capture!.measuredMa;
  const finding = checkOutputMode(ma).decision;
  const matches = finding === 'root-in-transmitter' ? p.instrument.outputMode === 'sqrt-transmitter' : finding === 'linear-output' ? p.instrument.outputMode !== 'sqrt-transmitter' : false;
  return { measuredMa: ma, finding, matchesRegister: matches };
}

/** Evaluates the captured points against the plan with the chosen standards (a pressure and a current one). */
export function evaluateRun(p: FrozenPlan, captured: readonly RunPoint[], chosen: readonly StandardRow[]): Pick<RunResultsView, 'results' | 'problem'> {
  const ps = chosen.find((s) => s.kind === 'pressure');
  const cs = chosen.find((s) => s.kind === 'current');
  if (!ps || !cs) return { results: null, problem: 'Choose a pressure and a current standard for the job to compute uncertainty and a decision' };
  const pressure = pressureSpecOf(ps);
  if (typeof pressure === 'string') return { results: null, problem: pressure };
  const r = evaluateCalibration({
    instrument: {
      lrv: p.instrument.lrv,
      urv: p.instrument.urv,
      unit: p.instrument.unit as PressureUnitId,
      outputMode: p.instrument.outputMode,
      cutoffMode: p.instrument.cutoffMode,
      cutoffValue: p.instrument.cutoffValue,
      tolerancePctSpan: p.instrument.tolerancePct,
      primaryElement: p.instrument.primaryElement ? (orificeSpecOf(p.instrument.primaryElement) ?? null) : null,
    },
    standards: { pressure, current: currentSpecOf(cs) },
    decisionRule: p.decisionRule,
    coverageProbability: p.coverage?.coverageProbability,
    coverageFactor: p.coverage?.coverageFactor,
    minimumTur: p.coverage?.minimumTur,
    readings: captured.map((x) => ({
      nominalPct: x.nominalPct,
      basis: x.basis,
      direction: x.approach,
      appliedDp: x.capture!.appliedDp,
      measuredMa: x.capture!.measuredMa,
      appliedDpSd: x.capture!.appliedDpSd,
      measuredMaSd: x.capture!.measuredMaSd,
      n: x.capture!.n,
      typeA: x.capture!.typeA ? { uMa: x.capture!.typeA.uMa, dof: x.capture!.typeA.dof } : null,
    })),
  });
  return r.ok ? { results: r.value, problem: null } : { results: null, problem: r.reason };
}
