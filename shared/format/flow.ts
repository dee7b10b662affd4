/**
 * Flow in engineering units beside % flow, for an instrument with an orifice primary element:
 * the live value on the capture screen and its display form everywhere. The flow itself is
 * ISO 5167-2 (shared/calc/orifice.ts), computed exactly as the evaluation does for each point.
 */
import { convertPressure, pointFlow, type FlowUnit, type OrificeSpec, type PointFlow, type PressureUnitId } from '../calc';
import { dpDecimals, formatFixed, formatSigned } from './numbers';
import { unitLabel } from './units';

/** What the live flow needs of an instrument: its range, unit and orifice (from `orificeSpecOf`). */
export interface FlowInstrument {
  lrv: number;
  urv: number;
  unit: PressureUnitId;
  element: { spec: OrificeSpec; flowUnit: FlowUnit };
}

/**
 * ISO 5167-2 flow at a DP reading in the instrument's unit (the DP above the LRV; the URV is the
 * DP at 100 % flow), with the constant-C square-root departure; undefined at or below zero DP or
 * when the equations cannot be evaluated. Mirrors shared/calc/evaluate.ts for a captured point.
 */
export function flowAtDp(ins: FlowInstrument, dp: number): PointFlow | undefined {
  const dpPa = convertPressure(dp - ins.lrv, ins.unit, 'Pa');
  const maxPa = convertPressure(ins.urv - ins.lrv, ins.unit, 'Pa');
  if (!(dpPa > 0) || !(maxPa > 0)) return undefined;
  return pointFlow(ins.element.spec, dpPa, maxPa, ins.element.flowUnit);
}

/**
 * Decimals for flow values: a display step not above 0.01 % of the flow at 100 % (the rule of
 * {@link dpDecimals} applied to the flow span), kept within 0–6.
 */
export function flowDecimals(fullScaleFlow: number): number {
  return dpDecimals(fullScaleFlow);
}

/** "12.345 m³/h" — a flow with its unit's one spelling. */
export function formatFlow(value: number | null | undefined, unit: string, decimals: number): string {
  const v = formatFixed(value, decimals);
  return v === '—' ? v : `${v} ${unitLabel(unit)}`;
}

/**
 * The constant-C square-root law's departure from ISO 5167-2 at a point, signed, 2 decimals:
 * "−0.41 %" (negative: the pure root reads low, C rises as Re falls). `—` when unknown.
 */
export function formatRootDeparture(pct: number | null | undefined): string {
  const v = formatSigned(pct, 2);
  return v === '—' ? v : `${v} %`;
}
