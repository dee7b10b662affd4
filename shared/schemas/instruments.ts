import { z } from 'zod';
import { FLOW_UNITS, PRESSURE_UNIT_IDS, type FlowUnit, type OrificeSpec } from '../calc';
import { atMost, numberField, rangeProblems, whenValid } from './numbers';

/** How the transmitter's 4–20 mA relates to DP (REFERENCE.md "Transfer functions"). */
export const OUTPUT_MODES = ['linear', 'sqrt-transmitter', 'sqrt-host'] as const;
export const OutputModeSchema = z.enum(OUTPUT_MODES);
export type OutputMode = z.infer<typeof OutputModeSchema>;

/** Low-flow cutoff behaviour of a rooted output. */
export const CUTOFF_MODES = ['none', 'clamp', 'linear'] as const;
export const CutoffModeSchema = z.enum(CUTOFF_MODES);
export type CutoffMode = z.infer<typeof CutoffModeSchema>;

export const INSTRUMENT_KINDS = ['dp-flow', 'pressure', 'dp-level'] as const;

const finite = (label: string) => numberField(label);

export const PrimaryElementSchema = z.object({
  kind: z.literal('orifice'),
  /** Pipe internal diameter D, mm. */
  pipeDiameterMm: finite('Pipe diameter').positive(),
  /** Orifice bore d, mm. */
  boreDiameterMm: finite('Bore diameter').positive(),
  taps: z.enum(['corner', 'd-d2', 'flange']),
  fluid: z.enum(['liquid', 'gas']),
  /** Density at flowing conditions, kg/m³. */
  densityKgM3: finite('Density').positive(),
  /** Dynamic viscosity, Pa·s. */
  viscosityPaS: finite('Viscosity').positive(),
  /** Isentropic exponent κ (gases). */
  kappa: finite('Isentropic exponent').positive().optional(),
  /** Upstream absolute pressure p1, Pa (gases). */
  upstreamPressurePa: finite('Upstream pressure').positive().optional(),
  /** Flow unit to show, e.g. 'm3/h', 'kg/h'. */
  flowUnit: z.string().max(20).optional(),
});

export type PrimaryElement = z.infer<typeof PrimaryElementSchema>;

/**
 * The register's primary element as the ISO 5167-2 calc takes it (SI units) and the flow unit to
 * show (default m3/h for a liquid, kg/h for a gas); `undefined` when a gas lacks κ or p1, or the
 * flow unit is not one the calc knows.
 */
export function orificeSpecOf(pe: PrimaryElement): { spec: OrificeSpec; flowUnit: FlowUnit } | undefined {
  const taps = pe.taps === 'd-d2' ? 'D-D/2' : pe.taps;
  const spec: OrificeSpec = { D: pe.pipeDiameterMm / 1000, d: pe.boreDiameterMm / 1000, taps, rho: pe.densityKgM3, mu: pe.viscosityPaS };
  if (pe.fluid === 'gas') {
    if (pe.kappa === undefined || pe.upstreamPressurePa === undefined) return undefined;
    spec.gas = { kappa: pe.kappa, p1: pe.upstreamPressurePa };
  }
  const unit = pe.flowUnit ?? (pe.fluid === 'gas' ? 'kg/h' : 'm3/h');
  if (!(FLOW_UNITS as readonly string[]).includes(unit)) return undefined;
  return { spec, flowUnit: unit as FlowUnit };
}

export const InstrumentInputSchema = z
  .object({
    tag: z
      .string()
      .trim()
      .min(2, 'Enter a tag of at least 2 characters (e.g. FT-101)')
      .max(40, atMost(40))
      .regex(/^[A-Z0-9][A-Z0-9-]*[A-Z0-9]$/i, 'Tags use letters, digits and hyphens (e.g. FT-101)'),
    kind: z.enum(INSTRUMENT_KINDS, { error: 'Choose the kind of instrument' }),
    service: z.string().trim().max(200, atMost(200)).default(''),
    location: z.string().trim().max(200, atMost(200)).default(''),
    lrv: finite('LRV'),
    urv: finite('URV'),
    unit: z.enum(PRESSURE_UNIT_IDS, { error: 'Choose a pressure unit from the list' }),
    outputMode: z.enum(OUTPUT_MODES, { error: 'Choose the output' }),
    cutoffMode: z.enum(CUTOFF_MODES, { error: 'Choose the low-flow cutoff' }).default('none'),
    /** Cutoff value: % flow for 'clamp', breakpoint % DP for 'linear'. */
    cutoffValue: finite('cutoff').min(0, 'The cutoff cannot be below 0 %').max(50, 'The cutoff is at most 50 %').default(0),
    /** Tolerance, ± % of span (of flow span for rooted outputs). */
    tolerancePct: finite('tolerance').positive('The tolerance must be above 0 %').max(50, 'The tolerance is at most 50 % of span'),
    intervalDays: finite('interval')
      .int('The interval is a whole number of days')
      .min(1, 'The interval is at least 1 day')
      .max(3650, 'The interval is at most 3650 days (10 years)'),
    primaryElement: PrimaryElementSchema.nullable().default(null),
    /**
     * The process medium is hazardous (toxic, flammable, hot, e.g. fuel gas): the flush before
     * opening is then a required preparation step, not an optional one. Default false.
     */
    hazardousMedium: z.boolean({ error: 'Say whether the medium is hazardous' }).default(false),
    notes: z.string().max(2000, atMost(2000)).default(''),
  })
  .refine((v) => v.lrv !== v.urv, { message: 'The LRV and URV must differ', path: ['urv'], ...whenValid('lrv', 'urv') })
  .superRefine((v, ctx) => {
    const p = rangeProblems(v.lrv, v.urv, v.unit);
    if (p.lo) ctx.addIssue({ code: 'custom', message: p.lo, path: ['lrv'] });
    if (p.hi) ctx.addIssue({ code: 'custom', message: p.hi, path: ['urv'] });
    if (p.span && v.lrv !== v.urv) ctx.addIssue({ code: 'custom', message: p.span, path: ['urv'] });
  }, whenValid('lrv', 'urv', 'unit'))
  .refine((v) => v.outputMode !== 'linear' || v.cutoffMode === 'none', {
    message: 'A linear output has no low-flow cutoff: choose None',
    path: ['cutoffMode'],
    ...whenValid('outputMode', 'cutoffMode'),
  });
export type InstrumentInput = z.input<typeof InstrumentInputSchema>;

export const InstrumentSchema = z.object({
  id: z.string(),
  tag: z.string(),
  kind: z.enum(INSTRUMENT_KINDS),
  service: z.string(),
  location: z.string(),
  lrv: z.number(),
  urv: z.number(),
  unit: z.string(),
  outputMode: OutputModeSchema,
  cutoffMode: CutoffModeSchema,
  cutoffValue: z.number(),
  tolerancePct: z.number(),
  intervalDays: z.number(),
  primaryElement: PrimaryElementSchema.nullable(),
  notes: z.string(),
  /** The process medium is hazardous (flush required before opening). */
  hazardousMedium: z.boolean().default(false),
  lastCalibratedOn: z.string().nullable(),
  nextDueOn: z.string().nullable(),
  createdAt: z.string(),
  updatedAt: z.string(),
});
export type Instrument = z.infer<typeof InstrumentSchema>;

/**
 * A reversed range (LRV above URV): legitimate for some level and pressure service (a wet-leg
 * level, a reverse-acting loop), so it is asked about, not refused. True when the range is reversed.
 */
export function isReversedRange(v: { lrv: number; urv: number }): boolean {
  return Number.isFinite(v.lrv) && Number.isFinite(v.urv) && v.lrv > v.urv;
}
