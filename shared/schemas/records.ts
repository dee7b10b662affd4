import { z } from 'zod';
import { IsoDateSchema } from './dates';
import { FrozenHartSchema } from './hart-job';
import { InstrumentSchema } from './instruments';
import { JobDetailSchema, JobSchema } from './jobs';
import { RunResultsSchema } from './runs';

/** Decisions a lead can sign (DESIGN.md §3.7). */
export const REVIEW_DECISIONS = ['approve', 'return'] as const;
export const ReviewDecisionSchema = z.enum(REVIEW_DECISIONS);
export type ReviewDecision = z.infer<typeof ReviewDecisionSchema>;

/** Meanings offered in the signing dialog; any short statement is accepted (21 CFR Part 11 §11.50(a)(3)). */
export const SIGNATURE_MEANINGS = {
  approve: ['approved', 'reviewed and approved'],
  return: ['returned for correction', 'reviewed, not accepted'],
} as const satisfies Record<ReviewDecision, readonly string[]>;

/** Body of `POST /api/jobs/:id/review`. The password is checked again at every signing (§11.200). */
export const ReviewBodySchema = z
  .object({
    decision: ReviewDecisionSchema,
    password: z.string().min(1, 'Enter your password to sign').max(256),
    meaning: z.string().trim().min(3, 'State what the signature means').max(120),
    comment: z.string().trim().max(2000).default(''),
  })
  .refine((v) => v.decision !== 'return' || v.comment.length >= 5, {
    message: 'Say what needs correcting (at least 5 characters)',
    path: ['comment'],
  });
export type ReviewBody = z.input<typeof ReviewBodySchema>;

/** A signature as stored: who (id and printed name), when (UTC), what it means, and what was signed. */
export const SignatureSchema = z.object({
  id: z.string(),
  jobId: z.string(),
  revision: z.number().int(),
  decision: ReviewDecisionSchema,
  meaning: z.string(),
  comment: z.string(),
  signerId: z.string(),
  signerName: z.string(),
  signerEmail: z.string(),
  /** ISO date-time, UTC. */
  signedAt: z.string(),
  /** sha256 of the record as signed. */
  recordHash: z.string(),
});
export type Signature = z.infer<typeof SignatureSchema>;

/** Body of `POST /api/jobs/:id/revisions`. */
export const RevisionBodySchema = z.object({
  reason: z.string().trim().min(5, 'Give the reason for the correction (at least 5 characters)').max(1000),
});
export type RevisionBody = z.input<typeof RevisionBodySchema>;

export const RevisionSummarySchema = z.object({
  revision: z.number().int(),
  reason: z.string(),
  createdAt: z.string(),
  createdByName: z.string(),
});
export type RevisionSummary = z.infer<typeof RevisionSummarySchema>;

/** A stored run as it stood in a superseded revision (rows as stored, times ISO). */
export const SnapshotRunSchema = z.object({
  id: z.string(),
  kind: z.string(),
  status: z.string(),
  plan: z.unknown(),
  results: RunResultsSchema.nullable(),
  startedBy: z.string().nullable(),
  startedAt: z.string(),
  endedAt: z.string().nullable(),
  points: z.array(
    z.object({ index: z.number(), state: z.string(), flags: z.unknown(), capture: z.unknown().nullable(), reason: z.string().nullable() }),
  ),
});
export type SnapshotRun = z.infer<typeof SnapshotRunSchema>;

/** A change to a point after it was first reached: a manual capture or a redo, from the audit trail. */
export const PointEventSchema = z.object({
  kind: z.enum(['captured-manually', 'redone']),
  index: z.number().int(),
  /** ISO date-time of the audit event. */
  at: z.string(),
  byId: z.string().nullable(),
  byName: z.string().nullable(),
  /** The reason given (manual capture: required; redo: optional). */
  reason: z.string().nullable(),
  /** Redo: the flags and capture that were set aside. */
  before: z.object({ flags: z.array(z.string()), capture: z.unknown().nullable() }).nullable(),
});
export type PointEvent = z.infer<typeof PointEventSchema>;

/** A run as frozen at submission: the stored run, its trim kind, and its point events. */
export const FrozenRunSchema = SnapshotRunSchema.extend({
  trim: z.string().nullable(),
  events: z.array(PointEventSchema),
});
export type FrozenRun = z.infer<typeof FrozenRunSchema>;

/**
 * Everything a record and its certificate say, frozen at submission (DESIGN.md §4 "Frozen at
 * signing"): the instrument's register entry as used, the standards with their certificates,
 * ranges, accuracy and due dates, the site's settings and decision rule, every run with its plan,
 * results, flags and point events. Signatures hash it (`recordHash`); the certificate of a signed
 * revision is built only from it.
 */
export const FrozenRecordSchema = z.object({
  version: z.literal(1),
  /** ISO date-time of the submission that froze it. */
  frozenAt: z.string(),
  frozenBy: z.object({ id: z.string(), name: z.string() }),
  job: z.object({
    id: z.string(),
    revision: z.number().int(),
    dueOn: z.string(),
    permitNo: z.string().nullable(),
    notes: z.string(),
    assigneeId: z.string().nullable(),
    assigneeName: z.string().nullable(),
    createdAt: z.string(),
    checklist: z.unknown(),
  }),
  instrument: z.object({
    id: z.string(),
    tag: z.string(),
    kind: z.string(),
    service: z.string(),
    location: z.string(),
    lrv: z.number(),
    urv: z.number(),
    unit: z.string(),
    outputMode: z.enum(['linear', 'sqrt-transmitter', 'sqrt-host']),
    cutoffMode: z.enum(['none', 'clamp', 'linear']),
    cutoffValue: z.number(),
    tolerancePct: z.number(),
    intervalDays: z.number(),
    primaryElement: z.unknown().nullable(),
    /** The medium was marked hazardous (flush required). Additive: absent in records frozen before it. */
    hazardousMedium: z.boolean().optional(),
  }),
  standards: z.array(
    z.object({
      id: z.string(),
      kind: z.string(),
      description: z.string(),
      serial: z.string(),
      rangeMin: z.number(),
      rangeMax: z.number(),
      unit: z.string(),
      accuracy: z.unknown(),
      resolution: z.number(),
      certificateNo: z.string(),
      calibratedOn: z.string(),
      dueOn: z.string(),
      certificateFileId: z.string().nullable(),
      /** The laboratory that calibrated it. Additive: absent in records frozen before it. */
      calibratingLab: z.string().optional(),
    }),
  ),
  site: z.object({ name: z.string(), domain: z.string(), settings: z.record(z.string(), z.unknown()) }),
  runs: z.array(FrozenRunSchema),
  performers: z.array(z.object({ id: z.string(), name: z.string() })),
  /**
   * The HART device (hart-job.ts): identity and configuration as found and as left, the check
   * against the register and its resolution, every write command with who and when, the trims.
   * Absent when the job used no HART device. Additive.
   */
  hart: FrozenHartSchema.optional(),
});
export type FrozenRecord = z.infer<typeof FrozenRecordSchema>;

export const RevisionSchema = RevisionSummarySchema.extend({
  snapshot: z.object({
    job: JobDetailSchema,
    runs: z.array(SnapshotRunSchema),
    signatures: z.array(SignatureSchema),
    /** The frozen record of this revision, when it was submitted with one. Additive. */
    record: FrozenRecordSchema.optional(),
  }),
});
export type Revision = z.infer<typeof RevisionSchema>;

/** One audit trail row as the API returns it. */
export const AuditEntrySchema = z.object({
  id: z.number(),
  at: z.string(),
  actorId: z.string().nullable(),
  actorEmail: z.string().nullable(),
  action: z.string(),
  entity: z.string(),
  entityId: z.string().nullable(),
  before: z.unknown(),
  after: z.unknown(),
  prevHash: z.string(),
  hash: z.string(),
  /** Who acted, in words: the user's name, or the bench and the run's performer for a hands-free capture. Additive. */
  actorName: z.string().nullable().optional(),
  /** What it concerns, in words (the instrument tag of a job or run, a standard's description). Additive. */
  subject: z.string().nullable().optional(),
  /** What happened, in words (e.g. "Checklist changed"). Additive. */
  summary: z.string().optional(),
});
export type AuditEntry = z.infer<typeof AuditEntrySchema>;

export const AuditVerifySchema = z.object({
  ok: z.boolean(),
  checked: z.number(),
  brokenAt: z.object({ id: z.number(), reason: z.string() }).optional(),
});
export type AuditVerify = z.infer<typeof AuditVerifySchema>;

/** One round of the return loop: the lead's return and the technician's reply on resubmission. */
export const ReviewExchangeSchema = z.object({
  signatureId: z.string(),
  /** Revision that was returned. */
  revision: z.number().int(),
  comment: z.string(),
  returnedBy: z.string(),
  /** ISO date-time, UTC. */
  returnedAt: z.string(),
  /** Null until the technician resubmits (or when they resubmitted without a reply). */
  reply: z.object({ text: z.string(), byName: z.string(), at: z.string() }).nullable(),
});
export type ReviewExchange = z.infer<typeof ReviewExchangeSchema>;

/** Everything the lead needs to review a job, except the runs' points and traces (GET /api/runs/:id). */
export const ReviewBundleSchema = z.object({
  job: JobDetailSchema,
  instrument: InstrumentSchema,
  signatures: z.array(SignatureSchema),
  revisions: z.array(RevisionSummarySchema),
  /** The job's and its runs' audit events, oldest first. */
  audit: z.array(AuditEntrySchema),
  /** Names of the people who performed the work (assignee, who started runs or captured points). */
  performers: z.array(z.object({ id: z.string(), name: z.string() })),
  /** Whether the signed-in user may sign this job now, and why not. */
  canSign: z.boolean(),
  cannotSignReason: z.string().nullable(),
  /** Every return of this job and the technician's reply to it, oldest first. Additive. */
  exchanges: z.array(ReviewExchangeSchema).optional(),
});
export type ReviewBundle = z.infer<typeof ReviewBundleSchema>;

/** A row of the Records page. */
export const RecordItemSchema = JobSchema.extend({
  lastSignature: SignatureSchema.nullable(),
  revisions: z.number().int(),
  /** Calibration date: the day the last completed as-left (else as-found) run ended, ISO; null without one. Additive. */
  calibratedOn: z.string().nullable().optional(),
  /** Overall decision of the last completed as-found and as-left runs (e.g. "pass"), null when none. Additive. */
  asFound: z.string().nullable().optional(),
  asLeft: z.string().nullable().optional(),
});
export type RecordItem = z.infer<typeof RecordItemSchema>;

export const RecordsQuerySchema = z
  .object({
    status: z.enum(['approved', 'submitted', 'all']).default('all'),
    q: z.string().trim().max(100).optional(),
    /** Calibration date from (inclusive), ISO date. */
    from: IsoDateSchema.optional(),
    /** Calibration date to (inclusive), ISO date. */
    to: IsoDateSchema.optional(),
  })
  .refine((v) => !v.from || !v.to || v.from <= v.to, { message: 'The start date is after the end date', path: ['to'] });

/** A job awaiting review, for the lead's inbox. */
export const InboxItemSchema = z.object({
  id: z.string(),
  tag: z.string(),
  service: z.string(),
  assigneeName: z.string().nullable(),
  revision: z.number().int(),
  /** When it was (last) submitted, ISO date-time, UTC. */
  submittedAt: z.string(),
  /** How many times it was returned before. */
  returns: z.number().int(),
});
export type InboxItem = z.infer<typeof InboxItemSchema>;

export const InboxSchema = z.object({
  /** Oldest submission first. */
  items: z.array(InboxItemSchema),
  count: z.number().int(),
});
export type Inbox = z.infer<typeof InboxSchema>;
