/**
 * Pressure and current units: branded number types and one conversion table.
 *
 * Factors are NIST SP 811 (2008) Appendix B.9 where that table gives them, built from exact
 * definitions (g_n, the pound, the inch) where it does; water columns at a reference temperature
 * come from g_n and the water density of Tanaka et al., Metrologia 38 (2001) 301–309.
 */

/** A number carrying a unit brand. Only functions in this module create branded pressures. */
export type Branded<U extends string> = number & { readonly __unit: U };

/** Pressure in pascal (SI). */
export type Pa = Branded<'Pa'>;

/** Loop current in milliampere. */
export type MilliAmp = Branded<'mA'>;

/**
 * Percentages of the three spans this trade mixes up: % of the DP span (LRV–URV of the applied DP),
 * % of the flow span (after the square root) and % of the output signal span (4–20 mA: the output
 * %, errors and tolerances in % of span). 25 % DP is 50 % flow through a root, so a PctDp where a
 * PctFlow belongs is a wrong number that looks right; the brands make the compiler refuse it, and
 * every change of basis is a named function (shared/calc/transfer.ts) or an explicit brand.
 */
export type PctDp = Branded<'% DP span'>;
/** % of the flow span (0 % flow at LRV, 100 % at URV, through the square root). */
export type PctFlow = Branded<'% flow span'>;
/** % of the output signal span (4–20 mA): output %, errors and tolerances in % of span. */
export type PctSpan = Branded<'% output span'>;

/** Brand a plain number as % of DP span (explicit, no conversion). */
export function pctDp(value: number): PctDp {
  return value as PctDp;
}

/** Brand a plain number as % of flow span (explicit, no conversion). */
export function pctFlow(value: number): PctFlow {
  return value as PctFlow;
}

/** Brand a plain number as % of the output span (explicit, no conversion). */
export function pctSpan(value: number): PctSpan {
  return value as PctSpan;
}

/** Brand a plain number as milliampere (explicit, no conversion). */
export function mA(value: number): MilliAmp {
  return value as MilliAmp;
}

/** Brand a plain number as pascal (explicit, no conversion). */
export function pa(value: number): Pa {
  return value as Pa;
}

/** Standard acceleration of gravity g_n, m/s², exact (CGPM 1901; NIST SP 811 B.9 footnote). */
export const G_N = 9.80665;

/** International inch, m, exact (NIST SP 811 B.9). */
const INCH_M = 0.0254;
/** International foot, m, exact. */
const FOOT_M = 0.3048;
/** Avoirdupois pound, kg, exact (NIST SP 811 B.9). */
const POUND_KG = 0.45359237;
/** Conventional density of water for "conventional" water columns, kg/m³ (NIST SP 811 B.9 footnote). */
const WATER_CONV_KG_M3 = 1000;

/**
 * Density of air-free water at 101 325 Pa, kg/m³, Tanaka et al., Metrologia 38 (2001) 301–309,
 * eq. (1): ρ(t) = a5·[1 − (t + a1)²(t + a2) / (a3·(t + a4))], valid 0–40 °C (ITS-90).
 * ρ(20 °C) = 998.2067 kg/m³. Throws on a temperature outside 0–40 °C (programmer error).
 * @param tempC water temperature, °C
 */
export function waterDensityTanaka(tempC: number): number {
  if (!(tempC >= 0 && tempC <= 40)) throw new RangeError(`water temperature ${tempC} °C outside 0–40 °C`);
  const a1 = -3.983035;
  const a2 = 301.797;
  const a3 = 522528.9;
  const a4 = 69.34881;
  const a5 = 999.97495;
  const t = tempC;
  return a5 * (1 - ((t + a1) ** 2 * (t + a2)) / (a3 * (t + a4)));
}

/** °F to °C (exact). */
export function fahrenheitToCelsius(f: number): number {
  return ((f - 32) * 5) / 9;
}

/**
 * Pressure, Pa, of a water column of the given height at a reference temperature: ρ(t)·g_n·h with
 * ρ from {@link waterDensityTanaka}. For "conventional" columns (ρ = 1000 kg/m³) pass `tempC = null`.
 * @param heightM column height, m
 * @param tempC reference temperature, °C, or null for the conventional 1000 kg/m³
 */
export function waterColumnPa(heightM: number, tempC: number | null): Pa {
  const rho = tempC === null ? WATER_CONV_KG_M3 : waterDensityTanaka(tempC);
  return (rho * G_N * heightM) as Pa;
}

/**
 * Every pressure unit id. Water and mercury columns always carry their reference temperature
 * (`@68F`, `@4C`, `@60F`) or `(conv)` for the conventional density, so an id is never ambiguous.
 * HART unit codes 1/4 are inH2O/mmH2O at 68 °F, 145 inH2O at 60 °F, 238/239 inH2O/mmH2O at 4 °C.
 */
export const PRESSURE_UNIT_IDS = [
  'Pa',
  'kPa',
  'MPa',
  'mbar',
  'bar',
  'psi',
  'inH2O@68F',
  'inH2O@4C',
  'inH2O@60F',
  'inH2O(conv)',
  'mmH2O@68F',
  'mmH2O@4C',
  'mmH2O@60F',
  'mmH2O(conv)',
  'ftH2O@68F',
  'ftH2O@4C',
  'ftH2O@60F',
  'ftH2O(conv)',
  'inHg@32F',
  'inHg@60F',
  'inHg(conv)',
  'mmHg',
  'torr',
  'kgf/cm2',
] as const;

/** A pressure unit id from {@link PRESSURE_UNIT_IDS}. */
export type PressureUnitId = (typeof PRESSURE_UNIT_IDS)[number];

/** A pressure value branded with its unit id. */
export type Pressure<U extends PressureUnitId> = Branded<U>;

const T68F = fahrenheitToCelsius(68);
const T60F = fahrenheitToCelsius(60);

/** Pound-force per square inch from its definition: 0.45359237 kg × g_n / (0.0254 m)². */
const PSI_PA = (POUND_KG * G_N) / (INCH_M * INCH_M);

/**
 * Pa per unit. Sources: NIST SP 811 (2008) Appendix B.9 (bar, psi, torr, mmHg, inHg, kgf/cm²,
 * conventional water columns); water columns at 68 °F / 4 °C / 60 °F from Tanaka (2001) and g_n
 * (SP 811 lists 4 °C and 60 °F to 6 digits; the computed values agree within its rounding).
 */
export const PA_PER_UNIT: Readonly<Record<PressureUnitId, number>> = Object.freeze({
  Pa: 1,
  kPa: 1e3,
  MPa: 1e6,
  mbar: 100,
  bar: 1e5,
  psi: PSI_PA,
  'inH2O@68F': waterColumnPa(INCH_M, T68F),
  'inH2O@4C': waterColumnPa(INCH_M, 4),
  'inH2O@60F': waterColumnPa(INCH_M, T60F),
  'inH2O(conv)': waterColumnPa(INCH_M, null),
  'mmH2O@68F': waterColumnPa(0.001, T68F),
  'mmH2O@4C': waterColumnPa(0.001, 4),
  'mmH2O@60F': waterColumnPa(0.001, T60F),
  'mmH2O(conv)': waterColumnPa(0.001, null),
  'ftH2O@68F': waterColumnPa(FOOT_M, T68F),
  'ftH2O@4C': waterColumnPa(FOOT_M, 4),
  'ftH2O@60F': waterColumnPa(FOOT_M, T60F),
  'ftH2O(conv)': waterColumnPa(FOOT_M, null),
  // NIST SP 811 B.9: inch of mercury (32 °F) 3.386 38 E+03; (60 °F) 3.376 85 E+03;
  // conventional inHg = 13 595.1 kg/m³ × g_n × 0.0254 m = 3386.388640341 Pa (SP 811: 3.386 389 E+03).
  'inHg@32F': 3386.38,
  'inHg@60F': 3376.85,
  'inHg(conv)': 13595.1 * G_N * INCH_M,
  // conventional mmHg = 13 595.1 kg/m³ × g_n × 0.001 m = 133.322387415 Pa (SP 811: 1.333 224 E+02).
  mmHg: 13595.1 * G_N * 0.001,
  torr: 101325 / 760,
  'kgf/cm2': G_N * 1e4,
});

/** Human label per unit id (for pickers and certificates). */
export const PRESSURE_UNIT_LABELS: Readonly<Record<PressureUnitId, string>> = Object.freeze({
  Pa: 'Pa',
  kPa: 'kPa',
  MPa: 'MPa',
  mbar: 'mbar',
  bar: 'bar',
  psi: 'psi (lbf/in²)',
  'inH2O@68F': 'inH₂O at 68 °F (20 °C)',
  'inH2O@4C': 'inH₂O at 4 °C (39.2 °F)',
  'inH2O@60F': 'inH₂O at 60 °F (15.6 °C)',
  'inH2O(conv)': 'inH₂O conventional (1000 kg/m³)',
  'mmH2O@68F': 'mmH₂O at 68 °F (20 °C)',
  'mmH2O@4C': 'mmH₂O at 4 °C (39.2 °F)',
  'mmH2O@60F': 'mmH₂O at 60 °F (15.6 °C)',
  'mmH2O(conv)': 'mmH₂O conventional (1000 kg/m³)',
  'ftH2O@68F': 'ftH₂O at 68 °F (20 °C)',
  'ftH2O@4C': 'ftH₂O at 4 °C (39.2 °F)',
  'ftH2O@60F': 'ftH₂O at 60 °F (15.6 °C)',
  'ftH2O(conv)': 'ftH₂O conventional (1000 kg/m³)',
  'inHg@32F': 'inHg at 32 °F (0 °C)',
  'inHg@60F': 'inHg at 60 °F (15.6 °C)',
  'inHg(conv)': 'inHg conventional (13 595.1 kg/m³)',
  mmHg: 'mmHg conventional (13 595.1 kg/m³)',
  torr: 'torr (101 325/760 Pa)',
  'kgf/cm2': 'kgf/cm²',
});

/** True when `id` is a known pressure unit id. */
export function isPressureUnitId(id: string): id is PressureUnitId {
  return Object.prototype.hasOwnProperty.call(PA_PER_UNIT, id);
}

/** Convert a value in `unit` to pascal. */
export function toPa(value: number, unit: PressureUnitId): Pa {
  return (value * PA_PER_UNIT[unit]) as Pa;
}

/** Convert pascal to a value in `unit`. */
export function fromPa<U extends PressureUnitId>(value: Pa, unit: U): Pressure<U> {
  return (value / PA_PER_UNIT[unit]) as Pressure<U>;
}

/**
 * Convert a pressure between units: value·(Pa per `from`)/(Pa per `to`). Round-trips to within
 * 1e-12 relative. Identity when the units are the same (no floating-point change).
 */
export function convertPressure<U extends PressureUnitId>(value: number, from: PressureUnitId, to: U): Pressure<U> {
  if (from === to) return value as Pressure<U>;
  return ((value * PA_PER_UNIT[from]) / PA_PER_UNIT[to]) as Pressure<U>;
}
