/**
 * Test-point plans. Point lists are common practice (REFERENCE.md): linear outputs 0, 25, 50, 75,
 * 100 % up and back down; rooted outputs 10, 25, 50, 75, 100 % flow (1, 6.25, 25, 56.25, 100 % DP)
 * up and down; each point approached from below on the way up and from above on the way down.
 */
import {
  dpFromDpPct,
  dpPctFromFlowPct,
  isRootedOutput,
  maFromDp,
  sensitivityMaPerUnit,
  span,
  type TransferSpec,
} from './transfer';
import { pctDp, pctFlow, type MilliAmp } from './units';

/** Direction from which a point is approached: `up` from below, `down` from above. */
export type Direction = 'up' | 'down';

/** Whether a nominal % is of flow span or of DP span. */
export type NominalBasis = 'flow' | 'dp';

/** One planned test point. */
export interface PlanPoint {
  /** 0-based position in the run. */
  index: number;
  /** Nominal %, of flow span when `basis` is 'flow', else of DP span. */
  nominalPct: number;
  basis: NominalBasis;
  /** Nominal % of DP span. */
  dpPct: number;
  /** Target DP in the instrument's unit. */
  targetDp: number;
  /** Expected current at the target, mA. */
  expectedMa: MilliAmp;
  approach: Direction;
  /** Capture window half-width, in the instrument's unit (always positive). */
  window: number;
  /**
   * Sensitivity dI/dP at the target, mA per instrument unit, for the hold's per-reading error
   * series (hold.ts); absent where it cannot be computed (0 % DP on a pure root) and on plans
   * frozen before it existed.
   */
  maPerDpUnit?: number;
}

/** Plan kinds. `standard` picks the list for the output mode. */
export type PlanKind = 'standard' | 'five-point' | 'three-point' | 'custom';

/** One custom point. */
export interface CustomPoint {
  nominalPct: number;
  basis: NominalBasis;
  approach: Direction;
}

/** Plan options. */
export interface PlanOptions {
  kind: PlanKind;
  /** Required for `custom`. */
  points?: readonly CustomPoint[];
  /**
   * Capture window half-width, % of DP span. Default 0.5 % — a product default (common practice
   * puts the applied value within a small fraction of span of the nominal; no standard fixes it).
   */
  windowPctOfSpan?: number;
}

/** Default capture window, % of DP span (product default). */
export const DEFAULT_WINDOW_PCT_OF_SPAN = 0.5;

function upDown(values: readonly number[], basis: NominalBasis): CustomPoint[] {
  const up = values.map((v) => ({ nominalPct: v, basis, approach: 'up' as const }));
  const down = values
    .slice(0, -1)
    .reverse()
    .map((v) => ({ nominalPct: v, basis, approach: 'down' as const }));
  return [...up, ...down];
}

/** Standard point lists per kind and output mode (common practice). */
export function planPointList(kind: Exclude<PlanKind, 'custom'>, spec: TransferSpec): CustomPoint[] {
  switch (kind) {
    case 'standard':
      return isRootedOutput(spec.mode) ? upDown([10, 25, 50, 75, 100], 'flow') : upDown([0, 25, 50, 75, 100], 'dp');
    case 'five-point':
      return upDown([0, 25, 50, 75, 100], 'dp');
    case 'three-point':
      return [0, 50, 100].map((v) => ({ nominalPct: v, basis: 'dp' as const, approach: 'up' as const }));
  }
}

/** Plan build failure reasons. */
export type PlanResult = { ok: true; value: PlanPoint[] } | { ok: false; reason: string };

function maPerDp(spec: TransferSpec, dp: number): { maPerDpUnit?: number } {
  const c = sensitivityMaPerUnit(spec, dp);
  return c !== undefined && Number.isFinite(c) ? { maPerDpUnit: c } : {};
}

/**
 * Build a plan: target DP, expected mA, approach and window for each point. The expected current
 * follows the instrument's transfer function (root and cutoff when the root is in the transmitter).
 * A flow nominal is converted with a pure root (flow% = 10·√DP%), the definition of the point.
 */
export function buildPlan(spec: TransferSpec, options: PlanOptions): PlanResult {
  const list = options.kind === 'custom' ? options.points : planPointList(options.kind, spec);
  if (!list || list.length === 0) return { ok: false, reason: 'no points' };
  const windowPct = options.windowPctOfSpan ?? DEFAULT_WINDOW_PCT_OF_SPAN;
  if (!(windowPct > 0)) return { ok: false, reason: 'window must be > 0 % of span' };
  const window = (Math.abs(span(spec.range)) * windowPct) / 100;
  const out: PlanPoint[] = [];
  for (const [index, p] of list.entries()) {
    if (!Number.isFinite(p.nominalPct)) return { ok: false, reason: `point ${index}: nominal is not a number` };
    const dpPct = p.basis === 'flow' ? dpPctFromFlowPct(pctFlow(p.nominalPct)) : pctDp(p.nominalPct);
    if (dpPct === undefined) return { ok: false, reason: `point ${index}: no DP for ${p.nominalPct} % flow` };
    const targetDp = dpFromDpPct(spec.range, dpPct);
    out.push({
      index,
      nominalPct: p.nominalPct,
      basis: p.basis,
      dpPct,
      targetDp,
      expectedMa: maFromDp(spec, targetDp),
      approach: p.approach,
      window,
      ...maPerDp(spec, targetDp),
    });
  }
  return { ok: true, value: out };
}
