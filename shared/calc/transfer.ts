/**
 * 4–20 mA transfer functions for DP and pressure transmitters (IEC 60381-1 / ISA-50.00.01 signal;
 * the square-root and cutoff conventions are common practice, see REFERENCE.md).
 *
 * Percentages are 0–100 and branded by their basis: {@link PctDp} (% of DP span), {@link PctFlow}
 * (% of flow span) and {@link PctSpan} (% of the 4–20 mA output span). DP values are in the
 * instrument's own unit (the range's unit); currents are branded {@link MilliAmp}.
 */
import { mA, pctDp, pctFlow, pctSpan, type MilliAmp, type PctDp, type PctFlow, type PctSpan, type PressureUnitId } from './units';

/** Live zero of the 4–20 mA signal, mA. */
export const LIVE_ZERO_MA = 4;
/** Span of the 4–20 mA signal, mA. */
export const SIGNAL_SPAN_MA = 16;

/**
 * Calibrated range. `lrv` and `urv` in `unit`; elevated (LRV < 0 < URV… or both negative),
 * suppressed (LRV > 0) and reversed (URV < LRV) ranges are all allowed. LRV = URV is a programmer error.
 */
export interface Range {
  lrv: number;
  urv: number;
  unit: PressureUnitId;
}

/**
 * Output mode. `linear`: output linear in DP (pressure transmitters, or flow without a root).
 * `sqrt-transmitter`: the transmitter extracts the square root; output linear in flow.
 * `sqrt-host`: the transmitter is linear in DP and the host extracts the root.
 */
export type OutputMode = 'linear' | 'sqrt-transmitter' | 'sqrt-host';

/** All output modes (for enums built elsewhere). */
export const OUTPUT_MODES = ['linear', 'sqrt-transmitter', 'sqrt-host'] as const satisfies readonly OutputMode[];

/**
 * Low-flow cutoff applied where the root is taken.
 * `none`: pure root. `clamp`: flow 0 (output 4 mA) below `flowPct` % flow (10 % flow ⇔ 1 % DP).
 * `linear`: flow linear in DP below `breakpointDpPct` % DP, continuous there:
 * flow% = (10/√b)·DP%. Default when unspecified: none. (Common practice; no standard fixes values.)
 */
export type Cutoff = { mode: 'none' } | { mode: 'clamp'; flowPct: number } | { mode: 'linear'; breakpointDpPct: number };

/** All cutoff modes. */
export const CUTOFF_MODES = ['none', 'clamp', 'linear'] as const;

/** A register's cutoff setting: its mode and value (% flow for clamp, % DP for the linear breakpoint). */
export interface CutoffSetting {
  outputMode: OutputMode;
  cutoffMode: (typeof CUTOFF_MODES)[number];
  cutoffValue: number;
}

/** The cutoff a register's setting means: none on a linear output, with mode none or with no positive value. */
export function cutoffOfSetting(i: CutoffSetting): Cutoff {
  if (i.outputMode === 'linear' || i.cutoffMode === 'none' || !(i.cutoffValue > 0)) return { mode: 'none' };
  return i.cutoffMode === 'clamp' ? { mode: 'clamp', flowPct: i.cutoffValue } : { mode: 'linear', breakpointDpPct: i.cutoffValue };
}

/** Everything needed to map DP to output and back. */
export interface TransferSpec {
  range: Range;
  mode: OutputMode;
  /** Cutoff of the root (transmitter or host); ignored for `linear`. Default none. */
  cutoff?: Cutoff;
}

function assertRange(r: Range): void {
  if (!(Number.isFinite(r.lrv) && Number.isFinite(r.urv)) || r.lrv === r.urv) {
    throw new RangeError(`invalid range LRV ${r.lrv} URV ${r.urv}`);
  }
}

/** Signed span URV − LRV, in the range's unit (negative for a reversed range). */
export function span(r: Range): number {
  assertRange(r);
  return r.urv - r.lrv;
}

/** Fraction of range x = (P − LRV)/(URV − LRV), dimensionless (0 at LRV, 1 at URV). */
export function dpFraction(r: Range, dp: number): number {
  return (dp - r.lrv) / span(r);
}

/** % of DP span of an applied DP, 0–100 at LRV–URV. */
export function dpPctFromDp(r: Range, dp: number): PctDp {
  return pctDp(100 * dpFraction(r, dp));
}

/** DP, in the range's unit, at a % of DP span. */
export function dpFromDpPct(r: Range, dpPct: PctDp): number {
  return r.lrv + (dpPct / 100) * span(r);
}

/**
 * Flow, % of flow span, from DP % of span through a root with a low-flow cutoff.
 * Below zero DP the pure root and the linear segment continue as an odd function
 * (flow = −√|DP|), so the mapping stays monotonic and invertible; a clamp gives 0.
 */
export function flowPctFromDpPct(dpPct: PctDp, cutoff: Cutoff = { mode: 'none' }): PctFlow {
  switch (cutoff.mode) {
    case 'none':
      return pctFlow(Math.sign(dpPct) * 10 * Math.sqrt(Math.abs(dpPct)));
    case 'clamp': {
      const f = Math.sign(dpPct) * 10 * Math.sqrt(Math.abs(dpPct));
      return pctFlow(f < cutoff.flowPct ? 0 : f);
    }
    case 'linear': {
      const b = cutoff.breakpointDpPct;
      if (!(b > 0)) throw new RangeError(`linear cutoff breakpoint ${b} % DP must be > 0`);
      if (dpPct < b) return pctFlow((10 / Math.sqrt(b)) * dpPct);
      return pctFlow(10 * Math.sqrt(dpPct));
    }
  }
}

/**
 * DP % of span that gives a flow % (inverse of {@link flowPctFromDpPct}). `undefined` where the
 * clamp makes it not unique (flow 0 and any flow below the clamp value).
 */
export function dpPctFromFlowPct(flowPct: PctFlow, cutoff: Cutoff = { mode: 'none' }): PctDp | undefined {
  switch (cutoff.mode) {
    case 'none':
      return pctDp((Math.sign(flowPct) * flowPct * flowPct) / 100);
    case 'clamp':
      if (flowPct < cutoff.flowPct || flowPct <= 0) return undefined;
      return pctDp((flowPct * flowPct) / 100);
    case 'linear': {
      const b = cutoff.breakpointDpPct;
      const fb = 10 * Math.sqrt(b);
      if (flowPct < fb) return pctDp((flowPct * Math.sqrt(b)) / 10);
      return pctDp((flowPct * flowPct) / 100);
    }
  }
}

/** True when the transmitter's own output follows flow (square root in the transmitter). */
export function isRootedOutput(mode: OutputMode): boolean {
  return mode === 'sqrt-transmitter';
}

/**
 * Output as % of the 4–20 mA span for an applied DP % of span: DP % for `linear` and
 * `sqrt-host` (the transmitter is linear), flow % for `sqrt-transmitter`.
 */
export function outputPctFromDpPct(spec: TransferSpec, dpPct: PctDp): PctSpan {
  return pctSpan(isRootedOutput(spec.mode) ? flowPctFromDpPct(dpPct, spec.cutoff) : dpPct);
}

/** Current, mA, for an output % of span: I = 4 + 16·p/100. */
export function maFromOutputPct(outputPct: PctSpan): MilliAmp {
  return mA(LIVE_ZERO_MA + (SIGNAL_SPAN_MA * outputPct) / 100);
}

/** Output % of span for a current, mA: p = (I − 4)/16·100. */
export function outputPctFromMa(current: number): PctSpan {
  return pctSpan(((current - LIVE_ZERO_MA) / SIGNAL_SPAN_MA) * 100);
}

/** Forward: expected transmitter current, mA, at an applied DP in the range's unit. */
export function maFromDp(spec: TransferSpec, dp: number): MilliAmp {
  return maFromOutputPct(outputPctFromDpPct(spec, dpPctFromDp(spec.range, dp)));
}

/**
 * Flow % of span seen by the process (transmitter root or host root) at an applied DP;
 * for a `linear` instrument this is the DP % itself.
 */
export function flowPctFromDp(spec: TransferSpec, dp: number): PctFlow {
  const dpPct = dpPctFromDp(spec.range, dp);
  return spec.mode === 'linear' ? pctFlow(dpPct) : flowPctFromDpPct(dpPct, spec.cutoff);
}

/** Inverse: DP % of span indicated by an output %; `undefined` inside a clamp cutoff. */
export function dpPctFromOutputPct(spec: TransferSpec, outputPct: PctSpan): PctDp | undefined {
  return isRootedOutput(spec.mode) ? dpPctFromFlowPct(pctFlow(outputPct), spec.cutoff) : pctDp(outputPct);
}

/** Inverse: DP, in the range's unit, indicated by a current, mA; `undefined` inside a clamp cutoff. */
export function dpFromMa(spec: TransferSpec, current: number): number | undefined {
  const p = dpPctFromOutputPct(spec, outputPctFromMa(current));
  return p === undefined ? undefined : dpFromDpPct(spec.range, p);
}

/**
 * Sensitivity dI/dP at an applied DP, mA per unit of the range. Through the root this is
 * 16·(d flow%/d DP%)/100/span with d flow%/d DP% = 5/√DP% — large near zero; 0 inside a clamp.
 * `undefined` at DP% = 0 on a pure root (infinite gain).
 */
export function sensitivityMaPerUnit(spec: TransferSpec, dp: number): number | undefined {
  const s = span(spec.range);
  if (!isRootedOutput(spec.mode)) return SIGNAL_SPAN_MA / s;
  const dpPct = dpPctFromDp(spec.range, dp);
  const cutoff = spec.cutoff ?? { mode: 'none' };
  let dFdD: number;
  if (cutoff.mode === 'linear' && dpPct < cutoff.breakpointDpPct) dFdD = 10 / Math.sqrt(cutoff.breakpointDpPct);
  else if (cutoff.mode === 'clamp' && flowPctFromDpPct(dpPct, cutoff) === 0) dFdD = 0;
  else if (dpPct === 0) return undefined;
  else dFdD = 5 / Math.sqrt(Math.abs(dpPct));
  return (SIGNAL_SPAN_MA * dFdD) / s;
}

/** NAMUR NE 43 (2021) signal class of a loop current. */
export type Ne43Class = 'failure-low' | 'undefined-low' | 'saturation-low' | 'measurement' | 'saturation-high' | 'undefined-high' | 'failure-high';

/** The parts of an NE 43 classification. */
export interface Ne43Result {
  class: Ne43Class;
  /** True for 3.8–20.5 mA (measurement incl. saturation). */
  isMeasurement: boolean;
  /** True for ≤ 3.6 mA or ≥ 21.0 mA. */
  isFailure: boolean;
}

/**
 * Classify a current per NAMUR NE 43 (2021): failure ≤ 3.6 mA or ≥ 21.0 mA; measurement
 * 3.8–20.5 mA, of which 3.8–4.0 and 20.0–20.5 are saturation (exclusive of 4.0 and 20.0);
 * 3.6–3.8 and 20.5–21.0 (exclusive) undefined.
 */
export function classifyNe43(current: number): Ne43Result {
  let c: Ne43Class;
  if (current <= 3.6) c = 'failure-low';
  else if (current < 3.8) c = 'undefined-low';
  else if (current < 4.0) c = 'saturation-low';
  else if (current <= 20.0) c = 'measurement';
  else if (current <= 20.5) c = 'saturation-high';
  else if (current < 21.0) c = 'undefined-high';
  else c = 'failure-high';
  return {
    class: c,
    isMeasurement: c === 'measurement' || c === 'saturation-low' || c === 'saturation-high',
    isFailure: c === 'failure-low' || c === 'failure-high',
  };
}
