import { z } from 'zod';
import { DueDateSchema, PastDateSchema } from './dates';
import { isPressureUnitId, PRESSURE_UNIT_IDS } from '../calc/units';
import { atMost, numberField, rangeProblems, whenValid } from './numbers';

export const STANDARD_KINDS = ['pressure', 'current'] as const;
export const StandardKindSchema = z.enum(STANDARD_KINDS);
export type StandardKind = z.infer<typeof StandardKindSchema>;

const finite = (label: string) => numberField(label);

/**
 * Accuracy as the maker or the certificate states it: ± (pctReading % of reading
 * + pctFullScale % of full scale + floor in the standard's unit), or a certificate's
 * expanded uncertainty U with its coverage factor k.
 */
export const AccuracySpecSchema = z.object({
  pctReading: finite('% of reading').min(0, 'Cannot be negative').max(10, 'At most 10 % of reading').default(0),
  pctFullScale: finite('% of full scale').min(0, 'Cannot be negative').max(10, 'At most 10 % of full scale').default(0),
  floor: finite('floor').min(0, 'Cannot be negative').default(0),
  certificateU: finite('certificate U').min(0, 'Cannot be negative').nullable().default(null),
  certificateK: finite('coverage factor k').positive('The coverage factor must be above 0').nullable().default(null),
});
export type AccuracySpec = z.infer<typeof AccuracySpecSchema>;

/**
 * The units a standard may be registered in: a pressure reference in one of the product's pressure
 * units (shared/calc/units.ts), a current meter in mA. Free text is refused (a unit the calc cannot
 * convert would only be noticed at the job).
 */
export const STANDARD_UNITS: Readonly<Record<StandardKind, readonly string[]>> = { pressure: PRESSURE_UNIT_IDS, current: ['mA'] };

/** True when `unit` is one a standard of this kind may be registered in. */
export function isStandardUnit(kind: StandardKind, unit: string): boolean {
  return kind === 'current' ? unit === 'mA' : isPressureUnitId(unit);
}

export const StandardInputSchema = z
  .object({
    kind: z.enum(STANDARD_KINDS, { error: 'Choose the kind of standard' }),
    description: z.string().trim().min(1, 'Describe the standard').max(200, atMost(200)),
    serial: z.string().trim().min(1, 'Enter the serial number').max(80, atMost(80)),
    rangeMin: finite('range minimum'),
    rangeMax: finite('range maximum'),
    unit: z.string({ error: 'Choose a unit from the list' }).refine((u) => u === 'mA' || isPressureUnitId(u), 'Choose a unit from the list'),
    accuracy: AccuracySpecSchema,
    resolution: finite('resolution').positive('The resolution must be above 0'),
    certificateNo: z.string().trim().min(1, 'Enter the certificate number').max(80, atMost(80)),
    /** The laboratory that calibrated the standard and issued its certificate (traceability). Default ''. */
    calibratingLab: z.string().trim().max(120, atMost(120)).default(''),
    calibratedOn: PastDateSchema,
    dueOn: DueDateSchema,
  })
  .superRefine((v, ctx) => {
    if (!isStandardUnit(v.kind, v.unit))
      ctx.addIssue({ code: 'custom', message: v.kind === 'current' ? 'A current meter reads in mA' : 'Choose a pressure unit from the list', path: ['unit'] });
  }, whenValid('kind', 'unit'))
  .refine((v) => v.rangeMax > v.rangeMin, { message: 'The range maximum must be above the minimum', path: ['rangeMax'], ...whenValid('rangeMin', 'rangeMax') })
  .superRefine((v, ctx) => {
    const p = rangeProblems(v.rangeMin, v.rangeMax, v.unit);
    if (p.lo) ctx.addIssue({ code: 'custom', message: p.lo, path: ['rangeMin'] });
    if (p.hi) ctx.addIssue({ code: 'custom', message: p.hi, path: ['rangeMax'] });
    if (p.span && v.rangeMax > v.rangeMin) ctx.addIssue({ code: 'custom', message: p.span, path: ['rangeMax'] });
  }, whenValid('rangeMin', 'rangeMax', 'unit'))
  .refine((v) => v.dueOn > v.calibratedOn, { message: 'The due date must come after the calibration date', path: ['dueOn'], ...whenValid('calibratedOn', 'dueOn') });
export type StandardInput = z.input<typeof StandardInputSchema>;

/** Due state: 'expired' blocks a run; 'due-soon' is within 30 days (site practice). */
export const DueStateSchema = z.enum(['in-date', 'due-soon', 'expired']);
export type DueState = z.infer<typeof DueStateSchema>;

export const StandardSchema = z.object({
  id: z.string(),
  kind: StandardKindSchema,
  description: z.string(),
  serial: z.string(),
  rangeMin: z.number(),
  rangeMax: z.number(),
  unit: z.string(),
  accuracy: AccuracySpecSchema,
  resolution: z.number(),
  certificateNo: z.string(),
  /** Who calibrated the standard ('' when not recorded). */
  calibratingLab: z.string().default(''),
  calibratedOn: z.string(),
  dueOn: z.string(),
  dueState: DueStateSchema,
  certificateFileId: z.string().nullable(),
  createdAt: z.string(),
  updatedAt: z.string(),
});
export type Standard = z.infer<typeof StandardSchema>;
