import { isPressureUnitId, type PointFlow } from '../../../../shared/calc';
import { orificeSpecOf, type Instrument } from '../../../../shared/schemas/instruments';
import { flowAtDp, flowDecimals, formatFlow, formatRootDeparture, type FlowInstrumentView } from '../../../lib/format';

/**
 * Flow in engineering units for the capture screen, for an instrument with an orifice primary
 * element and a rooted output (as the evaluation computes it per point): the ISO 5167-2 flow at a
 * DP in the instrument's unit, its display decimals and unit. Undefined for any other instrument.
 */
export interface FlowView {
  at(dp: number | null | undefined): PointFlow | undefined;
  /** Decimals for flow values (0.01 % of the flow at the URV). */
  decimals: number;
  unit: string;
  /** "24.83 m³/h", or — when the DP gives no flow. */
  text(flow: number | null | undefined): string;
  /** "−0.20 %": how far the constant-C square-root law departs from ISO 5167-2. */
  departure(pct: number | null | undefined): string;
}

export function flowViewOf(instrument: Instrument | undefined): FlowView | undefined {
  if (!instrument?.primaryElement || instrument.outputMode === 'linear' || !isPressureUnitId(instrument.unit)) return undefined;
  const element = orificeSpecOf(instrument.primaryElement);
  if (!element) return undefined;
  const ins: FlowInstrumentView = { lrv: instrument.lrv, urv: instrument.urv, unit: instrument.unit, element };
  const full = flowAtDp(ins, instrument.urv)?.flow ?? 0;
  const decimals = flowDecimals(full);
  return {
    at: (dp) => (dp === null || dp === undefined || !Number.isFinite(dp) ? undefined : flowAtDp(ins, dp)),
    decimals,
    unit: element.flowUnit,
    text: (q) => formatFlow(q, element.flowUnit, decimals),
    departure: formatRootDeparture,
  };
}
