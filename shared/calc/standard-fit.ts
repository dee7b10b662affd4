/**
 * How well a reference standard suits an instrument, for choosing one before a run: the test
 * uncertainty ratio it gives at the instrument's tolerance and what its resolution is worth there.
 * A quick guide at the top of the range, not the per-point budget of {@link pointBudget}.
 */
import { SIGNAL_SPAN_MA, type OutputMode } from './transfer';
import { convertPressure, isPressureUnitId } from './units';

/** The standard as the register holds it. */
export interface FitStandard {
  kind: 'pressure' | 'current';
  rangeMin: number;
  rangeMax: number;
  /** Unit id: a pressure unit id, or 'mA'. */
  unit: string;
  accuracy: { pctReading: number; pctFullScale: number; floor: number; certificateU: number | null; certificateK: number | null };
  /** Smallest step it shows, in its unit. */
  resolution: number;
}

/** The instrument as the register holds it. */
export interface FitInstrument {
  lrv: number;
  urv: number;
  unit: string;
  outputMode: OutputMode;
  /** ± % of span (of flow span for a square root in the transmitter). */
  tolerancePct: number;
}

export interface StandardFit {
  /**
   * Tolerance ÷ the standard's accuracy at the check point (the URV for a pressure standard,
   * 20 mA for a current meter); undefined when the units cannot be compared.
   */
  tur: number;
  /** The standard's resolution as a % of the tolerance at the check point. */
  resolutionPctOfTolerance: number;
  /** The tolerance at the check point, in the standard's unit. */
  tolerance: number;
  /** The standard's accuracy at the check point, in its unit (± limit, or the certificate's U). */
  accuracy: number;
}

/** Full scale of a standard's range: the larger magnitude of its ends. */
function fullScale(s: FitStandard): number {
  return Math.max(Math.abs(s.rangeMin), Math.abs(s.rangeMax));
}

/** The standard's stated accuracy at a reading `x` (its unit): the certificate's U when given, else the spec. */
function accuracyAt(s: FitStandard, x: number): number {
  const a = s.accuracy;
  if (a.certificateU !== null && a.certificateU > 0) return a.certificateU;
  return (a.pctReading / 100) * Math.abs(x) + (a.pctFullScale / 100) * fullScale(s) + a.floor;
}

/**
 * TUR and resolution of `s` for `ins`. Pressure: at the URV, where the tolerance in DP terms is
 * tol % × span (linear and square root in the host) or 2 × tol % × span (square root in the
 * transmitter: d(DP)/span = 2·q·dq at q = 100 % flow, REFERENCE.md "Transfer functions").
 * Current: at 20 mA, tolerance tol % × 16 mA. Undefined when the units do not match the kind or
 * cannot be converted, or the accuracy is zero.
 */
export function standardFit(s: FitStandard, ins: FitInstrument): StandardFit | undefined {
  let tolerance: number;
  let at: number;
  if (s.kind === 'pressure') {
    if (!isPressureUnitId(s.unit) || !isPressureUnitId(ins.unit)) return undefined;
    const span = Math.abs(ins.urv - ins.lrv);
    const tolDp = (ins.outputMode === 'sqrt-transmitter' ? 2 : 1) * (ins.tolerancePct / 100) * span;
    tolerance = convertPressure(tolDp, ins.unit, s.unit);
    at = convertPressure(Math.max(ins.lrv, ins.urv), ins.unit, s.unit);
  } else {
    if (s.unit !== 'mA') return undefined;
    tolerance = (ins.tolerancePct / 100) * SIGNAL_SPAN_MA;
    at = 20;
  }
  const accuracy = accuracyAt(s, at);
  if (!(accuracy > 0) || !(tolerance > 0)) return undefined;
  return { tur: tolerance / accuracy, resolutionPctOfTolerance: (s.resolution / tolerance) * 100, tolerance, accuracy };
}

/**
 * TUR below which a standard is flagged when the site sets no minimum: 4 : 1 (common practice;
 * the usual rule of thumb in calibration programmes, from memory).
 */
export const DEFAULT_MINIMUM_TUR = 4;
