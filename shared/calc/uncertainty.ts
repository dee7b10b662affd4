/**
 * GUM (JCGM 100:2008) uncertainty budget for one transmitter test point, evaluated in mA of output
 * and reported also in % of output span (of flow span for a rooted output).
 *
 * Contributions: pressure reference (spec half-width → rectangular a/√3, §4.3.7; or certificate
 * U/k, §4.3.3), its resolution δ/(2√3) (§F.2.2.1), current meter spec (% of reading + floor,
 * rectangular) and resolution, repeatability of both channels over the hold (Type A s/√n with
 * n − 1 degrees of freedom, §4.2), all DP terms carried to mA by the sensitivity dI/dP through the
 * root (§5.1.3). Combined u_c = √Σ(c_i·u_i)², effective degrees of freedom by Welch–Satterthwaite
 * (§G.4.1), expanded U = k·u_c with k = t_p(ν_eff) for the coverage probability p (default
 * 95.45 %, §G.3–G.4), or a k the site fixes.
 *
 * Repeatability. When the capture supplies the Type A standard uncertainty of the mean of the
 * per-reading error series (`typeA`, see hold.ts: current minus the expected current at the
 * concurrent applied DP, with the effective number of observations of an autocorrelated series),
 * that one term replaces the two channel terms: the current follows the applied DP, so their
 * scatters are correlated (GUM 5.2) and adding them as independent double-counts the common part,
 * while s/√n of each channel ignores the autocorrelation of consecutive readings (GUM 4.2.7).
 * Without it (manual entry, older records) the two channels are taken as independent with
 * s/√n and n − 1 degrees of freedom, as before. Either way the Type A term of the current is not
 * taken below the current meter's resolution term δ/(2√3): averaging cannot resolve below the
 * display step when the scatter is smaller than it (GUM F.2.2.1). This is conservative: the
 * resolution term also stays in the budget as its own Type B line.
 */
import { coverageFactor, DEFAULT_COVERAGE_POLICY, type CoveragePolicy } from './student-t';
import { sensitivityMaPerUnit, SIGNAL_SPAN_MA, type TransferSpec } from './transfer';
import { convertPressure, type PressureUnitId } from './units';

/** Pressure reference accuracy, either from the maker's spec or from its certificate. */
export type PressureReferenceSpec =
  | {
      kind: 'spec';
      /** Unit of `fullScale` and `resolution`. */
      unit: PressureUnitId;
      /** % of reading half-width. */
      pctOfReading: number;
      /** % of full scale half-width. */
      pctOfFullScale: number;
      /** Full scale of the reference, in `unit`. */
      fullScale: number;
      /** Display resolution, in `unit`; default 0 (ignored). */
      resolution?: number;
    }
  | {
      kind: 'certificate';
      unit: PressureUnitId;
      /** Expanded uncertainty from the certificate, in `unit`. */
      expandedU: number;
      /** Coverage factor stated on the certificate. */
      k: number;
      resolution?: number;
    };

/** Current meter accuracy spec: half-width = pctOfReading/100·|I| + floorMa; resolution in mA. */
export interface CurrentMeterSpec {
  pctOfReading: number;
  floorMa: number;
  /** Display resolution, mA; default 0. */
  resolutionMa?: number;
}

/** One line of the budget. */
export interface BudgetComponent {
  name:
    | 'pressure-reference'
    | 'pressure-resolution'
    | 'current-meter'
    | 'current-resolution'
    | 'repeatability-current'
    | 'repeatability-pressure'
    | 'repeatability-error';
  /** Standard uncertainty in the input's own unit (instrument DP unit or mA). */
  u: number;
  /** Sensitivity coefficient to mA (mA per input unit; 1 for mA inputs). */
  c: number;
  /** |c·u|, mA. */
  contributionMa: number;
  /** Degrees of freedom; Infinity for Type B. */
  dof: number;
}

/** Budget for one point. */
export interface PointBudget {
  components: BudgetComponent[];
  /** Combined standard uncertainty, mA. */
  ucMa: number;
  /** Expanded uncertainty U = k·u_c, mA. */
  expandedMa: number;
  /** Expanded uncertainty, % of output span (of flow span for a rooted output). */
  expandedPctSpan: number;
  /** Coverage factor used: t_p(ν_eff), or the site's fixed k. */
  k: number;
  /** Coverage probability p that k was computed for; null when the site fixes k. */
  coverageProbability: number | null;
  /** Welch–Satterthwaite effective degrees of freedom (Infinity when every term is Type B). */
  effectiveDof: number;
}

/**
 * Type A standard uncertainty of the mean of a hold's per-reading error series, from the capture
 * (hold.ts `TypeAOfMean`).
 */
export interface TypeAInput {
  /** Standard uncertainty of the mean error, mA. */
  uMa: number;
  /** Degrees of freedom of that estimate (ν = n_eff − 1). */
  dof: number;
}

/** What the budget needs from the captured point. */
export interface BudgetPoint {
  /** Applied DP (mean over the hold), instrument unit. */
  appliedDp: number;
  /** Measured current (mean over the hold), mA. */
  measuredMa: number;
  /** Standard deviation of the applied DP over the hold, instrument unit. */
  appliedDpSd?: number;
  /** Standard deviation of the current over the hold, mA. */
  measuredMaSd?: number;
  /** Number of samples over the hold (both channels). */
  n?: number;
  /** Type A of the mean of the per-reading error series; replaces the two channel terms when given. */
  typeA?: TypeAInput | null;
}

const SQRT3 = Math.sqrt(3);

/**
 * Welch–Satterthwaite ν_eff = u_c⁴ / Σ(u_i⁴/ν_i) (JCGM 100:2008 eq. G.2b), terms with ν = ∞ adding 0.
 * @param contributions |c_i·u_i| in a common unit with their degrees of freedom
 */
export function welchSatterthwaite(contributions: readonly { value: number; dof: number }[]): number {
  const uc2 = contributions.reduce((s, x) => s + x.value * x.value, 0);
  let denom = 0;
  for (const x of contributions) if (Number.isFinite(x.dof)) denom += x.value ** 4 / x.dof;
  return denom === 0 ? Infinity : (uc2 * uc2) / denom;
}

/**
 * Budget for one point. `undefined` when the sensitivity cannot be computed (0 % DP on a pure root).
 * @param coverage how k is chosen (default p = 95.45 %, k = t_p(ν_eff)); a number fixes k
 */
export function pointBudget(
  spec: TransferSpec,
  point: BudgetPoint,
  reference: PressureReferenceSpec,
  meter: CurrentMeterSpec,
  coverage: CoveragePolicy | number = DEFAULT_COVERAGE_POLICY,
): PointBudget | undefined {
  const policy: CoveragePolicy = typeof coverage === 'number' ? { mode: 'fixed', k: coverage } : coverage;
  const c = sensitivityMaPerUnit(spec, point.appliedDp);
  if (c === undefined) return undefined;
  const unit = spec.range.unit;
  const comps: BudgetComponent[] = [];
  const add = (name: BudgetComponent['name'], u: number, coef: number, dof: number) => {
    comps.push({ name, u, c: coef, contributionMa: Math.abs(coef * u), dof });
  };
  // Pressure reference, converted from the reference's unit to the instrument's.
  const readingInRefUnit = Math.abs(convertPressure(point.appliedDp, unit, reference.unit));
  let uRef: number;
  if (reference.kind === 'spec') {
    const a = (reference.pctOfReading / 100) * readingInRefUnit + (reference.pctOfFullScale / 100) * reference.fullScale;
    uRef = a / SQRT3;
  } else {
    if (!(reference.k > 0)) throw new RangeError('certificate coverage factor must be > 0');
    uRef = reference.expandedU / reference.k;
  }
  add('pressure-reference', convertPressure(uRef, reference.unit, unit), c, Infinity);
  if (reference.resolution && reference.resolution > 0) {
    add('pressure-resolution', convertPressure(reference.resolution / (2 * SQRT3), reference.unit, unit), c, Infinity);
  }
  const aMeter = (meter.pctOfReading / 100) * Math.abs(point.measuredMa) + meter.floorMa;
  add('current-meter', aMeter / SQRT3, 1, Infinity);
  if (meter.resolutionMa && meter.resolutionMa > 0) add('current-resolution', meter.resolutionMa / (2 * SQRT3), 1, Infinity);
  const resolutionFloorMa = meter.resolutionMa && meter.resolutionMa > 0 ? meter.resolutionMa / (2 * SQRT3) : 0;
  const n = point.n ?? 0;
  const typeA = point.typeA;
  if (typeA && Number.isFinite(typeA.uMa) && typeA.uMa >= 0 && typeA.dof > 0) {
    add('repeatability-error', Math.max(typeA.uMa, resolutionFloorMa), 1, typeA.dof);
  } else if (n >= 2) {
    if (point.measuredMaSd !== undefined) add('repeatability-current', Math.max(point.measuredMaSd / Math.sqrt(n), resolutionFloorMa), 1, n - 1);
    if (point.appliedDpSd !== undefined) add('repeatability-pressure', point.appliedDpSd / Math.sqrt(n), c, n - 1);
  }
  const ucMa = Math.sqrt(comps.reduce((s, x) => s + x.contributionMa ** 2, 0));
  const effectiveDof = welchSatterthwaite(comps.map((x) => ({ value: x.contributionMa, dof: x.dof })));
  const k = coverageFactor(policy, effectiveDof);
  const expandedMa = k * ucMa;
  return {
    components: comps,
    ucMa,
    expandedMa,
    expandedPctSpan: (expandedMa / SIGNAL_SPAN_MA) * 100,
    k,
    coverageProbability: policy.mode === 'probability' ? policy.probability : null,
    effectiveDof,
  };
}
