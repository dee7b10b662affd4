/**
 * One spelling per unit, used by the screens, the certificate and the mails. Labels are written
 * exactly as shown here and never case-transformed (mA is milliampere; "MA" would read as
 * megaampere).
 *
 * Water and mercury columns carry their reference temperature ("inH2O at 68 °F"). The digit in
 * H2O is the ordinary digit 2, not the subscript ₂: the certificate's embedded font subset has no
 * subscript digits (it would print a substitute), and one spelling that every medium draws beats
 * two that differ by a glyph. The conversion behind each label is in shared/calc/units.ts.
 */
import { FLOW_UNITS, PRESSURE_UNIT_IDS, type FlowUnit, type PressureUnitId } from '../calc';
import { formatNumber } from './numbers';

/** Display label of every pressure unit id (shared/calc PRESSURE_UNIT_IDS). */
export const PRESSURE_UNIT_SPELLING: Readonly<Record<PressureUnitId, string>> = Object.freeze({
  Pa: 'Pa',
  kPa: 'kPa',
  MPa: 'MPa',
  mbar: 'mbar',
  bar: 'bar',
  psi: 'psi',
  'inH2O@68F': 'inH2O at 68 °F',
  'inH2O@4C': 'inH2O at 4 °C',
  'inH2O@60F': 'inH2O at 60 °F',
  'inH2O(conv)': 'inH2O conventional',
  'mmH2O@68F': 'mmH2O at 68 °F',
  'mmH2O@4C': 'mmH2O at 4 °C',
  'mmH2O@60F': 'mmH2O at 60 °F',
  'mmH2O(conv)': 'mmH2O conventional',
  'ftH2O@68F': 'ftH2O at 68 °F',
  'ftH2O@4C': 'ftH2O at 4 °C',
  'ftH2O@60F': 'ftH2O at 60 °F',
  'ftH2O(conv)': 'ftH2O conventional',
  'inHg@32F': 'inHg at 32 °F',
  'inHg@60F': 'inHg at 60 °F',
  'inHg(conv)': 'inHg conventional',
  mmHg: 'mmHg',
  torr: 'torr',
  'kgf/cm2': 'kgf/cm²',
});

/** Display label of every flow unit (shared/calc FLOW_UNITS). */
export const FLOW_UNIT_SPELLING: Readonly<Record<FlowUnit, string>> = Object.freeze({
  'kg/s': 'kg/s',
  'kg/h': 'kg/h',
  't/h': 't/h',
  'm3/s': 'm³/s',
  'm3/h': 'm³/h',
  'l/s': 'L/s',
  'l/min': 'L/min',
});

/** Other units and unit-like labels the product prints. */
export const OTHER_UNIT_SPELLING = Object.freeze({
  mA: 'mA',
  V: 'V',
  '%': '%',
  '°C': '°C',
  '%RH': '% RH',
});

function isPressure(id: string): id is PressureUnitId {
  return (PRESSURE_UNIT_IDS as readonly string[]).includes(id);
}
function isFlow(id: string): id is FlowUnit {
  return (FLOW_UNITS as readonly string[]).includes(id);
}

/**
 * The one display spelling of a unit id ("inH2O@68F" → "inH2O at 68 °F", "m3/h" → "m³/h"); a
 * label that is already a display spelling is returned as is; anything else as given (never
 * case-changed).
 */
export function unitLabel(unit: string): string {
  if (isPressure(unit)) return PRESSURE_UNIT_SPELLING[unit];
  if (isFlow(unit)) return FLOW_UNIT_SPELLING[unit];
  return unit;
}

/** "LRV–URV unit", e.g. "0–100 inH2O at 68 °F"; spaced ("−250 – 250 mbar") when a bound is negative, so the dash is not read as a minus. */
export function formatRange(lrv: number, urv: number, unit: string, maxDecimals = 4): string {
  const sep = lrv < 0 || urv < 0 ? ' – ' : '–';
  return `${formatNumber(lrv, maxDecimals)}${sep}${formatNumber(urv, maxDecimals)} ${unitLabel(unit)}`;
}

/** Label of an expanded uncertainty with its coverage factor: "U (k=2)", "U (k=2.28)". */
export function uncertaintyLabel(k: number | null | undefined): string {
  return k === null || k === undefined || !Number.isFinite(k) ? 'U' : `U (k=${formatNumber(k, 2)})`;
}
