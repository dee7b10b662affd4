/**
 * What the capture screen shows from the latest pair of readings: applied DP in the instrument's
 * unit and as %, applied flow % (rooted outputs), expected and measured current, live error in %
 * of span, and the NE 43 class of the current. Pure; shared/calc does the maths.
 */
import {
  classifyNe43,
  convertPressure,
  dpPctFromDp,
  flowPctFromDp,
  isPressureUnitId,
  maFromDp,
  SIGNAL_SPAN_MA,
  cutoffOfSetting,
  type CutoffSetting,
  type Ne43Class,
  type TransferSpec,
} from '../../../../shared/calc';
import { formatNumber } from '../../../lib/format';

/** An instrument's range and output as the register holds them. */
export interface InstrumentSpecInput extends CutoffSetting {
  lrv: number;
  urv: number;
  unit: string;
  tolerancePct: number;
}

/** Transfer spec of an instrument, or undefined when its unit is not one we know. */
export function transferSpecOf(i: InstrumentSpecInput): TransferSpec | undefined {
  if (!isPressureUnitId(i.unit) || i.lrv === i.urv) return undefined;
  return { range: { lrv: i.lrv, urv: i.urv, unit: i.unit }, mode: i.outputMode, cutoff: cutoffOfSetting(i) };
}

export interface LiveValues {
  /** Applied DP in the instrument's unit (converted from the calibrator's when they differ). */
  appliedDp: number | null;
  dpPct: number | null;
  /** Flow % of span for outputs with a root (transmitter or host); null for linear. */
  flowPct: number | null;
  measuredMa: number | null;
  expectedMa: number | null;
  /** (measured − expected)/16 mA × 100, % of output span. */
  errorPctSpan: number | null;
  ne43: Ne43Class | null;
  /** The calibrator's unit cannot be converted to the instrument's. */
  unitProblem: string | null;
}

/** Live values from the latest readings. */
export function liveValues(spec: TransferSpec | undefined, pressure: number | null | undefined, pressureUnit: string | null, current: number | null | undefined): LiveValues {
  let appliedDp: number | null = pressure ?? null;
  let unitProblem: string | null = null;
  if (spec && appliedDp !== null && pressureUnit && pressureUnit !== spec.range.unit) {
    if (isPressureUnitId(pressureUnit)) appliedDp = convertPressure(appliedDp, pressureUnit, spec.range.unit);
    else {
      unitProblem = `The calibrator reports ${pressureUnit}, which cannot be converted to ${spec.range.unit}`;
      appliedDp = null;
    }
  }
  const measuredMa = current ?? null;
  const dpPct = spec && appliedDp !== null ? dpPctFromDp(spec.range, appliedDp) : null;
  const flowPct = spec && appliedDp !== null && spec.mode !== 'linear' ? flowPctFromDp({ ...spec, mode: 'sqrt-transmitter' }, appliedDp) : null;
  const expectedMa = spec && appliedDp !== null ? maFromDp(spec, appliedDp) : null;
  const errorPctSpan = expectedMa !== null && measuredMa !== null ? ((measuredMa - expectedMa) / SIGNAL_SPAN_MA) * 100 : null;
  return { appliedDp, dpPct, flowPct, measuredMa, expectedMa, errorPctSpan, ne43: measuredMa === null ? null : classifyNe43(measuredMa).class, unitProblem };
}

/** "approach from below" / "approach from above". */
export function approachWords(approach: 'up' | 'down'): string {
  return approach === 'up' ? 'approach from below' : 'approach from above';
}

/** "50 % flow" / "25 % DP". */
export function nominalWords(p: { nominalPct: number; basis: 'flow' | 'dp' }): string {
  return `${formatPct(p.nominalPct)} % ${p.basis === 'flow' ? 'flow' : 'DP'}`;
}

function formatPct(v: number): string {
  return formatNumber(v, 2);
}

/** Words for an NE 43 class outside the measurement range, or null inside it. */
export function ne43Problem(c: Ne43Class | null): string | null {
  switch (c) {
    case 'failure-low':
      return 'Loop current at or below 3.6 mA: the transmitter signals a failure (NE 43).';
    case 'failure-high':
      return 'Loop current at or above 21.0 mA: the transmitter signals a failure (NE 43).';
    case 'undefined-low':
    case 'undefined-high':
      return 'Loop current outside the NE 43 measurement range (3.8–20.5 mA): check the loop and the transmitter.';
    default:
      return null;
  }
}
