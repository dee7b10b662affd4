/**
 * Orifice-plate flow, ISO 5167-1:2003 / ISO 5167-2:2003 (the 2022 edition keeps the equations):
 * qm = C/√(1 − β⁴) · ε · (π/4)·d² · √(2·Δp·ρ₁) (ISO 5167-2 §5.1), Reader-Harris/Gallagher C with
 * tapping terms and the small-pipe term for D < 71.12 mm (§5.3.2.1), expansibility ε
 * (§5.3.2.2; ε = 1 for liquids), iterated because C depends on Re_D. Limits of use (§5.3.1) are
 * reported as warnings, never silently ignored. SI units throughout: m, Pa, kg/m³, Pa·s, kg/s, m³/s.
 */

/** Pressure tapping arrangement (ISO 5167-2 §5.2). */
export type TapType = 'corner' | 'D-D/2' | 'flange';

/**
 * Reader-Harris/Gallagher discharge coefficient (ISO 5167-2:2003 eq. 4):
 * C = 0.5961 + 0.0261β² − 0.216β⁸ + 0.000521(10⁶β/Re_D)^0.7 + (0.0188 + 0.0063A)β^3.5(10⁶/Re_D)^0.3
 *   + (0.043 + 0.080e^(−10L1) − 0.123e^(−7L1))(1 − 0.11A)β⁴/(1 − β⁴) − 0.031(M2′ − 0.8M2′^1.1)β^1.3
 *   [+ 0.011(0.75 − β)(2.8 − D/25.4 mm) when D < 71.12 mm],
 * A = (19000β/Re_D)^0.8, M2′ = 2L2′/(1 − β); corner L1 = L2′ = 0; D and D/2 L1 = 1, L2′ = 0.47;
 * flange L1 = L2′ = 25.4 mm/D.
 * @param D pipe internal diameter, m
 * @param beta d/D
 * @param reD pipe Reynolds number
 */
export function dischargeCoefficientRHG(D: number, beta: number, reD: number, taps: TapType): number {
  let L1: number;
  let L2: number;
  if (taps === 'corner') L1 = L2 = 0;
  else if (taps === 'D-D/2') {
    L1 = 1;
    L2 = 0.47;
  } else L1 = L2 = 0.0254 / D;
  const b2 = beta * beta;
  const b4 = b2 * b2;
  const b8 = b4 * b4;
  const A = ((19000 * beta) / reD) ** 0.8;
  const M2 = (2 * L2) / (1 - beta);
  let C =
    0.5961 +
    0.0261 * b2 -
    0.216 * b8 +
    0.000521 * ((1e6 * beta) / reD) ** 0.7 +
    (0.0188 + 0.0063 * A) * beta ** 3.5 * (1e6 / reD) ** 0.3 +
    (0.043 + 0.08 * Math.exp(-10 * L1) - 0.123 * Math.exp(-7 * L1)) * (1 - 0.11 * A) * (b4 / (1 - b4)) -
    0.031 * (M2 - 0.8 * M2 ** 1.1) * beta ** 1.3;
  if (D < 0.07112) C += 0.011 * (0.75 - beta) * (2.8 - D / 0.0254);
  return C;
}

/**
 * Expansibility factor ε = 1 − (0.351 + 0.256β⁴ + 0.93β⁸)[1 − (p2/p1)^(1/κ)] (ISO 5167-2:2003 eq. 5).
 * @param p1 upstream absolute pressure, Pa
 * @param dp differential pressure, Pa (p2 = p1 − Δp)
 * @param kappa isentropic exponent
 */
export function expansibility(beta: number, p1: number, dp: number, kappa: number): number {
  const b4 = beta ** 4;
  return 1 - (0.351 + 0.256 * b4 + 0.93 * b4 * b4) * (1 - ((p1 - dp) / p1) ** (1 / kappa));
}

/** Orifice meter and fluid. */
export interface OrificeSpec {
  /** Pipe internal diameter at flowing conditions, m. */
  D: number;
  /** Orifice bore at flowing conditions, m. */
  d: number;
  taps: TapType;
  /** Upstream density ρ₁, kg/m³. */
  rho: number;
  /** Dynamic viscosity, Pa·s. */
  mu: number;
  /** Gas only: isentropic exponent κ and upstream absolute pressure p1 (Pa). Omit both for a liquid (ε = 1). */
  gas?: { kappa: number; p1: number };
}

/** Orifice flow at one DP. */
export interface OrificeFlow {
  massFlowKgPerS: number;
  volumeFlowM3PerS: number;
  C: number;
  epsilon: number;
  beta: number;
  reD: number;
  iterations: number;
  /** Limits of use of ISO 5167-2 §5.3.1 that this point violates. */
  warnings: string[];
}

/** Result union of {@link orificeFlow}. */
export type OrificeResult = { ok: true; value: OrificeFlow } | { ok: false; reason: string };

function limitWarnings(s: OrificeSpec, beta: number, reD: number, dp: number): string[] {
  const w: string[] = [];
  if (s.d < 0.0125) w.push('d < 12.5 mm (ISO 5167-2 §5.3.1)');
  if (s.D < 0.05 || s.D > 1) w.push('D outside 50–1000 mm (ISO 5167-2 §5.3.1)');
  if (beta < 0.1 || beta > 0.75) w.push('β outside 0.10–0.75 (ISO 5167-2 §5.3.1)');
  if (s.taps === 'flange') {
    const min = Math.max(5000, 170000 * beta * beta * s.D * 1000);
    if (reD < min) w.push(`Re_D ${reD.toFixed(0)} below ${min.toFixed(0)} for flange taps (ISO 5167-2 §5.3.1)`);
  } else {
    const min = beta > 0.56 ? Math.max(5000, 16000 * beta * beta) : 5000;
    if (reD < min) w.push(`Re_D ${reD.toFixed(0)} below ${min.toFixed(0)} (ISO 5167-2 §5.3.1)`);
  }
  if (s.gas && (s.gas.p1 - dp) / s.gas.p1 < 0.75) w.push('p2/p1 < 0.75: expansibility equation outside its range (ISO 5167-2 §5.3.2.2)');
  return w;
}

/**
 * Mass and volume flow through an orifice at a DP, iterating C with Re_D until |ΔC| < 1e-13.
 * @param dp differential pressure, Pa (> 0)
 */
export function orificeFlow(s: OrificeSpec, dp: number): OrificeResult {
  if (![s.D, s.d, s.rho, s.mu].every((v) => v > 0)) return { ok: false, reason: 'D, d, ρ and μ must be > 0' };
  if (!(s.d < s.D)) return { ok: false, reason: 'bore must be smaller than the pipe' };
  if (!(dp > 0)) return { ok: false, reason: 'DP must be > 0' };
  if (s.gas && !(s.gas.kappa > 0 && s.gas.p1 > dp)) return { ok: false, reason: 'gas needs κ > 0 and p1 > Δp' };
  const beta = s.d / s.D;
  const eps = s.gas ? expansibility(beta, s.gas.p1, dp, s.gas.kappa) : 1;
  const k = (eps * Math.PI * s.d * s.d * Math.sqrt(2 * dp * s.rho)) / (4 * Math.sqrt(1 - beta ** 4));
  let C = 0.6;
  let qm = C * k;
  let reD = (4 * qm) / (Math.PI * s.mu * s.D);
  let i = 0;
  for (; i < 100; i++) {
    const Cn = dischargeCoefficientRHG(s.D, beta, reD, s.taps);
    const done = Math.abs(Cn - C) < 1e-13;
    C = Cn;
    qm = C * k;
    reD = (4 * qm) / (Math.PI * s.mu * s.D);
    if (done) break;
  }
  if (i === 100) return { ok: false, reason: 'C did not converge' };
  return {
    ok: true,
    value: { massFlowKgPerS: qm, volumeFlowM3PerS: qm / s.rho, C, epsilon: eps, beta, reD, iterations: i + 1, warnings: limitWarnings(s, beta, reD, dp) },
  };
}

/**
 * Deviation of a pure square-root scaling from the ISO flow at a DP: (q_root − q_ISO)/q_ISO, where
 * q_root = q_ISO(Δp_max)·√(Δp/Δp_max). Negative: the pure root under-reads (C rises as Re falls).
 * @param dpMax DP at 100 % flow, Pa
 */
export function pureRootDeviation(s: OrificeSpec, dp: number, dpMax: number): number | undefined {
  const full = orificeFlow(s, dpMax);
  const at = orificeFlow(s, dp);
  if (!full.ok || !at.ok) return undefined;
  const root = full.value.massFlowKgPerS * Math.sqrt(dp / dpMax);
  return (root - at.value.massFlowKgPerS) / at.value.massFlowKgPerS;
}

/** Flow units the product shows (mass or volume per time). */
export const FLOW_UNITS = ['kg/s', 'kg/h', 't/h', 'm3/s', 'm3/h', 'l/s', 'l/min'] as const;
export type FlowUnit = (typeof FLOW_UNITS)[number];

/** A flow in a site unit from mass flow (kg/s) and density (kg/m³). Exact factors (SI). */
export function flowInUnit(massKgPerS: number, rho: number, unit: FlowUnit): number {
  switch (unit) {
    case 'kg/s':
      return massKgPerS;
    case 'kg/h':
      return massKgPerS * 3600;
    case 't/h':
      return massKgPerS * 3.6;
    case 'm3/s':
      return massKgPerS / rho;
    case 'm3/h':
      return (massKgPerS / rho) * 3600;
    case 'l/s':
      return (massKgPerS / rho) * 1000;
    case 'l/min':
      return (massKgPerS / rho) * 60_000;
  }
}

/** Flow at one test point in engineering units, with what ISO 5167-2 used. */
export interface PointFlow {
  /** Flow from the ISO 5167-2 equations at the applied DP, in `unit`. */
  flow: number;
  unit: FlowUnit;
  /** ISO 5167-2 discharge coefficient (Reader-Harris/Gallagher) and expansibility used. */
  C: number;
  epsilon: number;
  reD: number;
  /**
   * How far the constant-C square-root law (the transmitter's % flow scaled to the flow at URV)
   * departs from the ISO 5167-2 flow at this DP: (q_root − q_ISO)/q_ISO × 100, %. Negative: the
   * pure root under-reads at low flow because C rises as Re falls.
   */
  pureRootDeparturePct: number | null;
  warnings: string[];
}

/**
 * ISO 5167-2 flow at a test point for an instrument with an orifice primary element.
 * @param dpPa applied DP, Pa (> 0)
 * @param dpMaxPa DP at 100 % flow (URV), Pa
 */
export function pointFlow(s: OrificeSpec, dpPa: number, dpMaxPa: number, unit: FlowUnit): PointFlow | undefined {
  const r = orificeFlow(s, dpPa);
  if (!r.ok) return undefined;
  const dev = pureRootDeviation(s, dpPa, dpMaxPa);
  return {
    flow: flowInUnit(r.value.massFlowKgPerS, s.rho, unit),
    unit,
    C: r.value.C,
    epsilon: r.value.epsilon,
    reD: r.value.reD,
    pureRootDeparturePct: dev === undefined ? null : dev * 100,
    warnings: r.value.warnings,
  };
}
