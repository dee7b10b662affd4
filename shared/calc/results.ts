/**
 * Results from captured points: applied flow from the actual applied DP, expected current at that
 * DP, error in % of span (of flow span for a rooted output) and its DP equivalent, hysteresis,
 * terminal-based, zero-based and independent (minimax) non-linearity (ISA-51.1-1979 (R1993)
 * definitions) and least squares under its own name, worst error.
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
import { pctDp, type MilliAmp } from './units';

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

/** A straight line y = offset + slope·x over output % x, y in % of output span. */
export interface LinearityLine {
  /** Value of the line at 0 % output, % of output span. */
  offsetPctSpan: number;
  /** % of output span per % of output. */
  slope: number;
}

/** One non-linearity figure: the signed deviation of largest magnitude and where it occurs. */
export interface LinearityFigure {
  /** Measured minus line at the worst point, % of output span (signed). */
  pctSpan: number;
  /** Ideal output % (flow % for a rooted output) of the worst point. */
  atOutputPct: number;
  /** Nominal % of that point, on the plan's basis. */
  atNominalPct: number;
  line: LinearityLine;
}

/**
 * Non-linearity of the averaged (up and down) error curve, % of output span, by the definitions
 * of ISA-51.1-1979 (R1993): terminal-based (line through the curve at the lower and upper range
 * values), zero-based (line through the curve at the lower range value, slope chosen to minimise
 * the maximum deviation), independent (the line that minimises the maximum deviation: the
 * minimax or Chebyshev line). Least squares is offered under its own name; it is not an ISA-51.1
 * definition. The lowest and highest test points stand for the lower and upper range values
 * (`anchorLowOutputPct`, `anchorHighOutputPct` say which; a rooted plan starts at 10 % flow).
 */
export interface NonLinearity {
  terminalBased: LinearityFigure;
  zeroBased: LinearityFigure;
  independent: LinearityFigure;
  leastSquares: LinearityFigure;
  anchorLowOutputPct: number;
  anchorHighOutputPct: number;
}

interface Xy {
  x: number;
  y: number;
  nominal: number;
}

function figure(xy: readonly Xy[], line: LinearityLine): LinearityFigure {
  let worst = xy[0]!;
  let dev = 0;
  for (const p of xy) {
    const d = p.y - (line.offsetPctSpan + line.slope * p.x);
    if (Math.abs(d) > Math.abs(dev) || p === xy[0]) {
      dev = d;
      worst = p;
    }
  }
  return { pctSpan: dev, atOutputPct: worst.x, atNominalPct: worst.nominal, line };
}

function maxAbsDev(xy: readonly { x: number; y: number }[], a: number, b: number): number {
  let m = 0;
  for (const p of xy) m = Math.max(m, Math.abs(p.y - (a + b * p.x)));
  return m;
}

/**
 * Minimax (Chebyshev) straight line through discrete points, exact. By the alternation theorem the
 * best line has three points x_i < x_j < x_k whose deviations are equal in size and alternate in
 * sign, so its slope is that of the chord i–k and it runs midway between that chord and point j;
 * every such candidate is tried and the one with the smallest maximum deviation kept (O(n⁴),
 * n ≤ a few dozen test points). Fewer than three points: the line through them (deviation 0).
 */
export function minimaxLine(xy: readonly { x: number; y: number }[]): LinearityLine {
  const pts = [...xy].sort((p, q) => p.x - q.x);
  if (pts.length === 0) return { offsetPctSpan: 0, slope: 0 };
  if (pts.length === 1 || pts[pts.length - 1]!.x === pts[0]!.x) return { offsetPctSpan: pts[0]!.y, slope: 0 };
  if (pts.length === 2) {
    const b = (pts[1]!.y - pts[0]!.y) / (pts[1]!.x - pts[0]!.x);
    return { offsetPctSpan: pts[0]!.y - b * pts[0]!.x, slope: b };
  }
  let best: LinearityLine | undefined;
  let bestDev = Infinity;
  for (let i = 0; i < pts.length; i++) {
    for (let k = i + 2; k < pts.length; k++) {
      const pi = pts[i]!;
      const pk = pts[k]!;
      if (pk.x === pi.x) continue;
      const b = (pk.y - pi.y) / (pk.x - pi.x);
      const a0 = pi.y - b * pi.x;
      for (let j = i + 1; j < k; j++) {
        const pj = pts[j]!;
        const a = a0 + (pj.y - (a0 + b * pj.x)) / 2;
        const d = maxAbsDev(pts, a, b);
        if (d < bestDev) {
          bestDev = d;
          best = { offsetPctSpan: a, slope: b };
        }
      }
    }
  }
  return best!;
}

/**
 * Line through an anchor point whose slope minimises the maximum deviation of the other points.
 * max|d_i(b)| is convex and piecewise linear in b, so its minimum lies where two deviations are
 * equal and opposite, or where one is zero; all such slopes are tried.
 */
export function anchoredMinimaxLine(xy: readonly { x: number; y: number }[], anchor: { x: number; y: number }): LinearityLine {
  const others = xy.filter((p) => p.x !== anchor.x);
  if (others.length === 0) return { offsetPctSpan: anchor.y, slope: 0 };
  let best: LinearityLine = { offsetPctSpan: anchor.y, slope: 0 };
  let bestDev = Infinity;
  for (const p of others) {
    for (const q of others) {
      const den = p.x - anchor.x + (q.x - anchor.x);
      if (den === 0) continue;
      const b = (p.y - anchor.y + (q.y - anchor.y)) / den;
      const a = anchor.y - b * anchor.x;
      const d = maxAbsDev(xy, a, b);
      if (d < bestDev) {
        bestDev = d;
        best = { offsetPctSpan: a, slope: b };
      }
    }
  }
  return best;
}

/** Ordinary least-squares line. */
export function leastSquaresLine(xy: readonly { x: number; y: number }[]): LinearityLine {
  const n = xy.length;
  const mx = xy.reduce((s, p) => s + p.x, 0) / n;
  const my = xy.reduce((s, p) => s + p.y, 0) / n;
  let sxx = 0;
  let sxy = 0;
  for (const p of xy) {
    sxx += (p.x - mx) ** 2;
    sxy += (p.x - mx) * (p.y - my);
  }
  const b = sxx > 0 ? sxy / sxx : 0;
  return { offsetPctSpan: my - b * mx, slope: b };
}

/** Non-linearity figures of points (x = output %, y = error % of span); `undefined` below two distinct x. */
export function linearityOf(xy: readonly Xy[]): NonLinearity | undefined {
  const pts = [...xy].sort((a, b) => a.x - b.x);
  if (pts.length < 2) return undefined;
  const first = pts[0]!;
  const last = pts[pts.length - 1]!;
  const tSlope = (last.y - first.y) / (last.x - first.x);
  return {
    terminalBased: figure(pts, { offsetPctSpan: first.y - tSlope * first.x, slope: tSlope }),
    zeroBased: figure(pts, anchoredMinimaxLine(pts, first)),
    independent: figure(pts, minimaxLine(pts)),
    leastSquares: figure(pts, leastSquaresLine(pts)),
    anchorLowOutputPct: first.x,
    anchorHighOutputPct: last.x,
  };
}

/**
 * Non-linearity of the averaged (up and down) error curve against the ideal output % at each
 * nominal (see {@link NonLinearity}). `undefined` with fewer than two distinct nominals.
 */
export function nonLinearity(spec: TransferSpec, points: readonly CapturedPoint[], errors: readonly number[]): NonLinearity | undefined {
  const groups = new Map<number, { sum: number; n: number; nominal: number }>();
  points.forEach((p, i) => {
    const dpPct = pctDp(p.basis === 'flow' ? (p.nominalPct * p.nominalPct) / 100 : p.nominalPct);
    const x = outputPctFromDpPct({ ...spec, cutoff: { mode: 'none' } }, dpPct);
    const g = groups.get(x) ?? { sum: 0, n: 0, nominal: p.nominalPct };
    g.sum += errors[i] ?? NaN;
    g.n++;
    groups.set(x, g);
  });
  return linearityOf([...groups.entries()].map(([x, g]) => ({ x, y: g.sum / g.n, nominal: g.nominal })));
}

/** Index and value of the error with the largest magnitude; `undefined` for no points. */
export function worstError(errors: readonly number[]): { index: number; errorPctSpan: number } | undefined {
  let best: { index: number; errorPctSpan: number } | undefined;
  errors.forEach((e, index) => {
    if (best === undefined || Math.abs(e) > Math.abs(best.errorPctSpan)) best = { index, errorPctSpan: e };
  });
  return best;
}
