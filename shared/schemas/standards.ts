import { z } from 'zod';
import { DueDateSchema, PastDateSchema } from './dates';
import { rangeProblems } from './numbers';

export const STANDARD_KINDS = ['pressure', 'current'] as const;
export const StandardKindSchema = z.enum(STANDARD_KINDS);
export type StandardKind = z.infer<typeof StandardKindSchema>;

const finite = (label: string) => z.number({ message: `${label} must be a number` }).finite(`${label} must be finite`);

/**
 * Accuracy as the maker or the certificate states it: ± (pctReading % of reading
 * + pctFullScale % of full scale + floor in the standard's unit), or a certificate's
 * expanded uncertainty U with its coverage factor k.
 */
export const AccuracySpecSchema = z.object({
  pctReading: finite('% of reading').min(0).max(10).default(0),
  pctFullScale: finite('% of full scale').min(0).max(10).default(0),
  floor: finite('Floor').min(0).default(0),
  certificateU: finite('Certificate U').min(0).nullable().default(null),
  certificateK: finite('Coverage factor k').positive().nullable().default(null),
});
export type AccuracySpec = z.infer<typeof AccuracySpecSchema>;

export const StandardInputSchema = z
  .object({
    kind: StandardKindSchema,
    description: z.string().trim().min(1, 'Describe the standard').max(200),
    serial: z.string().trim().min(1, 'Enter the serial number').max(80),
    rangeMin: finite('Range minimum'),
    rangeMax: finite('Range maximum'),
    unit: z.string().min(1).max(20),
    accuracy: AccuracySpecSchema,
    resolution: finite('Resolution').positive(),
    certificateNo: z.string().trim().min(1, 'Enter the certificate number').max(80),
    calibratedOn: PastDateSchema,
    dueOn: DueDateSchema,
  })
  .refine((v) => v.rangeMax > v.rangeMin, { message: 'Range maximum must exceed minimum', path: ['rangeMax'] })
  .superRefine((v, ctx) => {
    const p = rangeProblems(v.rangeMin, v.rangeMax, v.unit);
    if (p.lo) ctx.addIssue({ code: 'custom', message: p.lo, path: ['rangeMin'] });
    if (p.hi) ctx.addIssue({ code: 'custom', message: p.hi, path: ['rangeMax'] });
    if (p.span && v.rangeMax > v.rangeMin) ctx.addIssue({ code: 'custom', message: p.span, path: ['rangeMax'] });
  })
  .refine((v) => v.dueOn > v.calibratedOn, { message: 'Due date must follow the calibration date', path: ['dueOn'] });
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
  calibratedOn: z.string(),
  dueOn: z.string(),
  dueState: DueStateSchema,
  certificateFileId: z.string().nullable(),
  createdAt: z.string(),
  updatedAt: z.string(),
});
export type Standard = z.infer<typeof StandardSchema>;
