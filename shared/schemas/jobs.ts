import { z } from 'zod';
import { DueDateSchema } from './dates';

/** Life of a job (our names). */
export const JOB_STATUSES = ['open', 'in-progress', 'submitted', 'returned', 'approved'] as const;
export const JobStatusSchema = z.enum(JOB_STATUSES);
export type JobStatus = z.infer<typeof JobStatusSchema>;


export const CreateJobBodySchema = z.object({
  instrumentId: z.string().uuid('Choose an instrument'),
  assigneeId: z.string().uuid().nullable().default(null),
  dueOn: DueDateSchema,
  notes: z.string().max(2000).default(''),
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
    /** Whether an interlock bypass is needed for this work. */
    required: z.boolean(),
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
});
export type Checklist = z.infer<typeof ChecklistSchema>;

/** Changes to the checklist; the server stamps who and when on each step set true. */
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
});
export type JobDetail = z.infer<typeof JobDetailSchema>;

/** Body of `POST /api/jobs/:id/submit`: after a return, the technician's answer to the lead's comment. */
export const SubmitJobBodySchema = z.object({
  reply: z.string().trim().max(2000, 'Keep the reply under 2000 characters').default(''),
});
export type SubmitJobBody = z.input<typeof SubmitJobBodySchema>;
