import { z } from 'zod';
import { DueDateSchema } from './dates';
import { atMost, numberField } from './numbers';

/** Life of a job (our names). */
export const JOB_STATUSES = ['open', 'in-progress', 'submitted', 'returned', 'approved'] as const;
export const JobStatusSchema = z.enum(JOB_STATUSES);
export type JobStatus = z.infer<typeof JobStatusSchema>;


export const CreateJobBodySchema = z.object({
  instrumentId: z.string({ error: 'Choose an instrument' }).uuid('Choose an instrument'),
  assigneeId: z.string().uuid('Choose a technician from the list').nullable().default(null),
  dueOn: DueDateSchema,
  notes: z.string().max(2000, atMost(2000)).default(''),
});
export type CreateJobBody = z.input<typeof CreateJobBodySchema>;

export const AssignJobBodySchema = z.object({ assigneeId: z.string().uuid('Choose a technician') });

export const JobSchema = z.object({
  id: z.string(),
  instrumentId: z.string(),
  tag: z.string(),
  status: JobStatusSchema,
  assigneeId: z.string().nullable(),
  assigneeName: z.string().nullable(),
  dueOn: z.string(),
  overdue: z.boolean(),
  permitNo: z.string().nullable(),
  notes: z.string(),
  revision: z.number(),
  createdAt: z.string(),
  updatedAt: z.string(),
});
export type Job = z.infer<typeof JobSchema>;

/** Who did a preparation step and when (ISO date-time). */
export const SignedStepSchema = z.object({ by: z.string(), byName: z.string(), at: z.string() }).nullable();

/** The preparation checklist and return to service (DESIGN.md §3.3). */
export const ChecklistSchema = z.object({
  standardIds: z.array(z.string()),
  permitNo: z.string().nullable(),
  bypass: z.object({
    /** Whether an interlock bypass is needed for this work; null until the technician answers (no default). */
    required: z.boolean().nullable(),
    /** Which interlock or trip is bypassed. */
    description: z.string(),
    recorded: SignedStepSchema,
    removed: SignedStepSchema,
  }),
  operatorsInformed: SignedStepSchema,
  isolated: SignedStepSchema,
  vented: SignedStepSchema,
  flushed: SignedStepSchema,
  returnedToService: SignedStepSchema,
  /** Conditions at the bench for the certificate; absent until recorded. */
  conditions: z
    .object({
      temperatureC: z.number().nullable(),
      humidityPctRh: z.number().nullable(),
      onReceipt: z.string().nullable(),
      recorded: SignedStepSchema,
    })
    .optional(),
});
export type Checklist = z.infer<typeof ChecklistSchema>;

/** Changes to the checklist; the server stamps who and when on each step set true. */
/**
 * Plausible ambient conditions for calibration work, in the workshop or at the manifold outdoors:
 * −30 to +60 °C and 0–100 %rh (our own bounds, common practice for field instruments; a value
 * outside is a typing error, e.g. °F entered as °C).
 */
export const AMBIENT_BOUNDS = { temperatureC: { min: -30, max: 60 }, humidityPctRh: { min: 0, max: 100 } } as const;

export const ConditionsPatchSchema = z.object({
  temperatureC: numberField('ambient temperature')
    .min(AMBIENT_BOUNDS.temperatureC.min, `The ambient temperature must be at least ${AMBIENT_BOUNDS.temperatureC.min} °C`)
    .max(AMBIENT_BOUNDS.temperatureC.max, `The ambient temperature must be at most ${AMBIENT_BOUNDS.temperatureC.max} °C`),
  humidityPctRh: numberField('relative humidity')
    .min(AMBIENT_BOUNDS.humidityPctRh.min, 'The relative humidity cannot be below 0 %rh')
    .max(AMBIENT_BOUNDS.humidityPctRh.max, 'The relative humidity cannot be above 100 %rh'),
  onReceipt: z.string().trim().min(1, 'Describe the condition on receipt (e.g. clean, no visible damage)').max(500, atMost(500)),
});
export type ConditionsPatch = z.infer<typeof ConditionsPatchSchema>;

export const ChecklistPatchSchema = z
  .object({
    standardIds: z.array(z.string().uuid('Not a valid standard')).max(6).optional(),
    permitNo: z.string().trim().min(1, 'Enter the permit number').max(60).optional(),
    bypass: z.object({ required: z.boolean(), description: z.string().trim().max(200) }).optional(),
    bypassRecorded: z.literal(true).optional(),
    bypassRemoved: z.literal(true).optional(),
    operatorsInformed: z.literal(true).optional(),
    isolated: z.literal(true).optional(),
    vented: z.literal(true).optional(),
    flushed: z.literal(true).optional(),
    returnedToService: z.literal(true).optional(),
    /** Ambient temperature and humidity and the condition on receipt (for the certificate). */
    conditions: ConditionsPatchSchema.optional(),
  })
  .refine((v) => Object.keys(v).length > 0, { message: 'Nothing to change' })
  .refine((v) => !v.bypass?.required || v.bypass.description.length > 0, { message: 'Say which interlock is bypassed', path: ['bypass', 'description'] });
export type ChecklistPatch = z.infer<typeof ChecklistPatchSchema>;

/** A standard as chosen for a job, with the checks that decide whether it may be used. */
export const JobStandardSchema = z.object({
  id: z.string(),
  kind: z.enum(['pressure', 'current']),
  description: z.string(),
  serial: z.string(),
  certificateNo: z.string(),
  dueOn: z.string(),
  dueState: z.enum(['in-date', 'due-soon', 'expired']),
  /** Why it may not be used, or null. */
  problem: z.string().nullable(),
  /** The standard's current certificate file (file store id), when one is uploaded. Additive. */
  certificateFileId: z.string().nullable().optional(),
});

export const RunSummarySchema = z.object({
  id: z.string(),
  kind: z.enum(['mode-check', 'as-found', 'trim', 'as-left']),
  status: z.string(),
  startedAt: z.string(),
  endedAt: z.string().nullable(),
  overallDecision: z.string().nullable(),
});

/** A lead's return of a job: the comment, who signed the return and when (ISO date-time, UTC). */
export const ReturnNoticeSchema = z.object({
  signatureId: z.string(),
  revision: z.number().int(),
  comment: z.string(),
  byName: z.string(),
  at: z.string(),
});
export type ReturnNotice = z.infer<typeof ReturnNoticeSchema>;

/** How a register standard suits this job's instrument (shared/calc `standardFit`), for choosing. */
export const StandardFitSchema = z.object({
  id: z.string(),
  /** Tolerance ÷ the standard's accuracy at the check point (URV, or 20 mA). */
  tur: z.number(),
  /** The standard's resolution as a % of the tolerance there. */
  resolutionPctOfTolerance: z.number(),
  /** The site's minimum TUR (or the default 4). */
  minimumTur: z.number(),
  /** Why it is a poor choice, in words, or null. */
  warning: z.string().nullable(),
});
export type StandardFit = z.infer<typeof StandardFitSchema>;

export const JobDetailSchema = JobSchema.extend({
  checklist: ChecklistSchema,
  standards: z.array(JobStandardSchema),
  runs: z.array(RunSummarySchema),
  /** What stops the next step, in words; empty when the run may start. */
  blockers: z.array(z.string()),
  /** Blockers for submission. */
  submitBlockers: z.array(z.string()),
  /** While the job stands returned: the lead's comment, who returned it and when. Additive. */
  returned: ReturnNoticeSchema.nullable().optional(),
  /** TUR and resolution of each register standard at this instrument's tolerance. Additive. */
  standardFits: z.array(StandardFitSchema).optional(),
  /** The instrument's medium is hazardous: the flush is required. Additive. */
  hazardousMedium: z.boolean().optional(),
});
export type JobDetail = z.infer<typeof JobDetailSchema>;

/** Body of `POST /api/jobs/:id/submit`: after a return, the technician's answer to the lead's comment. */
export const SubmitJobBodySchema = z.object({
  reply: z.string().trim().max(2000, 'Keep the reply under 2000 characters').default(''),
});
export type SubmitJobBody = z.input<typeof SubmitJobBodySchema>;
