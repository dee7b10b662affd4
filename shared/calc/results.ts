/**
 * Results from captured points: applied flow from the actual applied DP, expected current at that
 * DP, error in % of span (of flow span for a rooted output) and its DP equivalent, hysteresis,
 * terminal-based and least-squares non-linearity (ISA-51.1-1979 (R1993) terminology), worst error.
 */
import {
  dpFromMa,
  dpPctFromDp,
  flowPctFromDp,
  maFromDp,
  outputPctFromDpPct,
  SIGNAL_SPAN_MA,
  type TransferSpec,
} from './transfer';
import type { Direction, NominalBasis } from './plan';
import type { MilliAmp } from './units';

/** A captured point (means over the hold). */
export interface CapturedPoint {
  nominalPct: number;
  basis: NominalBasis;
  direction: Direction;
  /** Applied DP, instrument unit. */
  appliedDp: number;
  /** Measured current, mA. */
  measuredMa: number;
}

/** Per-point result. */
export interface PointResult {
  appliedDpPct: number;
  /** Flow % from the actual applied DP (transmitter or host root); undefined for a linear instrument. */
  appliedFlowPct: number | undefined;
  /** Expected current at the actual applied DP, mA. */
  expectedMa: MilliAmp;
  /** (I_meas − I_exp)/16 mA × 100, % of output span (flow span for a rooted output). */
  errorPctSpan: number;
  /**
   * DP equivalent of the error: the DP the output indicates minus the applied DP, instrument unit;
   * undefined inside a clamp cutoff.
   */
  dpEquivalentError: number | undefined;
}

/** Result of one captured point. */
export function pointResult(spec: TransferSpec, p: CapturedPoint): PointResult {
  const expectedMa = maFromDp(spec, p.appliedDp);
  const indicated = dpFromMa(spec, p.measuredMa);
  return {
    appliedDpPct: dpPctFromDp(spec.range, p.appliedDp),
    appliedFlowPct: spec.mode === 'linear' ? undefined : flowPctFromDp(spec, p.appliedDp),
    expectedMa,
    errorPctSpan: ((p.measuredMa - expectedMa) / SIGNAL_SPAN_MA) * 100,
    dpEquivalentError: indicated === undefined ? undefined : indicated - p.appliedDp,
  };
}

/** Hysteresis at one nominal. */
export interface HysteresisResult {
  nominalPct: number;
  basis: NominalBasis;
  /**
   * e_up − e_down, % of output span (signed): the difference of the up and down errors at the same
   * nominal point, each error already referred to its own applied value (the applied pressure is
   * never exactly the same twice), not the raw mA difference (REFERENCE.md, common practice).
   */
  hysteresisPctSpan: number;
  /** The error on the way up and on the way down, % of output span. */
  upErrorPctSpan: number;
  downErrorPctSpan: number;
}

/** Hysteresis per nominal that has both an up and a down reading (the last of each is used). */
export function hysteresis(points: readonly CapturedPoint[], errors: readonly number[]): HysteresisResult[] {
  const key = (p: CapturedPoint) => `${p.basis}:${p.nominalPct}`;
  const ups = new Map<string, number>();
  const downs = new Map<string, number>();
  points.forEach((p, i) => (p.direction === 'up' ? ups : downs).set(key(p), errors[i] ?? NaN));
  const out: HysteresisResult[] = [];
  for (const p of points) {
    const k = key(p);
    const u = ups.get(k);
    const d = downs.get(k);
    if (u === undefined || d === undefined || out.some((h) => `${h.basis}:${h.nominalPct}` === k)) continue;
    out.push({ nominalPct: p.nominalPct, basis: p.basis, hysteresisPctSpan: u - d, upErrorPctSpan: u, downErrorPctSpan: d });
  }
  return out;
}

/** Non-linearity, % of output span. */
export interface NonLinearity {
  /** Max |deviation| of the averaged error curve from the line through its end points (ISA-51.1 terminal-based). */
  terminalBasedPctSpan: number;
  /** Max |deviation| from the least-squares line (ISA-51.1 independent / least-squares). */
  leastSquaresPctSpan: number;
}

/**
 * Non-linearity of the averaged (up and down) error curve against the ideal output % at each
 * nominal. `undefined` with fewer than two distinct nominals.
 */
export function nonLinearity(spec: TransferSpec, points: readonly CapturedPoint[], errors: readonly number[]): NonLinearity | undefined {
  const groups = new Map<number, { sum: number; n: number }>();
  points.forEach((p, i) => {
    const dpPct = p.basis === 'flow' ? (p.nominalPct * p.nominalPct) / 100 : p.nominalPct;
    const x = outputPctFromDpPct({ ...spec, cutoff: { mode: 'none' } }, dpPct);
    const g = groups.get(x) ?? { sum: 0, n: 0 };
    g.sum += errors[i] ?? NaN;
    g.n++;
    groups.set(x, g);
  });
  const xy = [...groups.entries()].map(([x, g]) => ({ x, y: g.sum / g.n })).sort((a, b) => a.x - b.x);
  if (xy.length < 2) return undefined;
  const first = xy[0]!;
  const last = xy[xy.length - 1]!;
  const tSlope = (last.y - first.y) / (last.x - first.x);
  const terminal = Math.max(...xy.map((p) => Math.abs(p.y - (first.y + tSlope * (p.x - first.x)))));
  const n = xy.length;
  const mx = xy.reduce((s, p) => s + p.x, 0) / n;
  const my = xy.reduce((s, p) => s + p.y, 0) / n;
  let sxx = 0;
  let sxy = 0;
  for (const p of xy) {
    sxx += (p.x - mx) ** 2;
    sxy += (p.x - mx) * (p.y - my);
  }
  const b = sxy / sxx;
  const ls = Math.max(...xy.map((p) => Math.abs(p.y - (my + b * (p.x - mx)))));
  return { terminalBasedPctSpan: terminal, leastSquaresPctSpan: ls };
}

/** Index and value of the error with the largest magnitude; `undefined` for no points. */
export function worstError(errors: readonly number[]): { index: number; errorPctSpan: number } | undefined {
  let best: { index: number; errorPctSpan: number } | undefined;
  errors.forEach((e, index) => {
    if (best === undefined || Math.abs(e) > Math.abs(best.errorPctSpan)) best = { index, errorPctSpan: e };
  });
  return best;
}
