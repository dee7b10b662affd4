import { index, integer, jsonb, pgTable, text, timestamp, unique, uuid } from 'drizzle-orm/pg-core';
import { jobs } from './registers';
import { users } from './users';

/**
 * Electronic signatures on job records (21 CFR Part 11 §11.50): the signer's id and printed
 * name, the UTC date-time and the meaning, linked to the record by the hash of what was signed
 * (§11.70). Rows are never changed; a correction is a new revision with its own signature.
 */
export const signatures = pgTable(
  'signatures',
  {
    id: uuid('id').primaryKey().defaultRandom(),
    jobId: uuid('job_id')
      .notNull()
      .references(() => jobs.id),
    /** Revision of the job record that was signed. */
    revision: integer('revision').notNull(),
    decision: text('decision', { enum: ['approve', 'return'] }).notNull(),
    /** What the signature means, in words (e.g. "approved", "reviewed"). */
    meaning: text('meaning').notNull(),
    comment: text('comment').notNull().default(''),
    signerId: uuid('signer_id')
      .notNull()
      .references(() => users.id),
    /** Printed name and email at the time of signing. */
    signerName: text('signer_name').notNull(),
    signerEmail: text('signer_email').notNull(),
    signedAt: timestamp('signed_at', { withTimezone: true }).notNull(),
    /** sha256 of the canonical JSON of the record as signed (job detail and its runs). */
    recordHash: text('record_hash').notNull(),
  },
  (t) => [index('signatures_job_idx').on(t.jobId)],
);

/**
 * A superseded revision of a job record: the approved detail, runs, points and signatures as
 * they stood when a correction was opened, so the earlier record stays readable.
 */
export const jobRevisions = pgTable(
  'job_revisions',
  {
    id: uuid('id').primaryKey().defaultRandom(),
    jobId: uuid('job_id')
      .notNull()
      .references(() => jobs.id),
    /** The revision number this snapshot preserves (the job moved on to revision + 1). */
    revision: integer('revision').notNull(),
    /** Why the correction was opened. */
    reason: text('reason').notNull(),
    snapshot: jsonb('snapshot').notNull(),
    createdBy: uuid('created_by').notNull(),
    createdByName: text('created_by_name').notNull(),
    createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [unique('job_revisions_job_revision_uq').on(t.jobId, t.revision)],
);

/**
 * The record as submitted, frozen: the instrument's register entry as used, the standards with
 * their certificates, the site's settings, the plan, every run's results and flags, and how each
 * point was captured (shared/schemas/records `FrozenRecordSchema`). One row per job revision; a
 * resubmission after a return replaces it. Signatures hash it; the certificate of a signed
 * revision is built only from it.
 */
export const recordSnapshots = pgTable(
  'record_snapshots',
  {
    id: uuid('id').primaryKey().defaultRandom(),
    jobId: uuid('job_id')
      .notNull()
      .references(() => jobs.id),
    revision: integer('revision').notNull(),
    snapshot: jsonb('snapshot').notNull(),
    /** sha256 of the canonical JSON of `snapshot` (what a signature's record hash must equal). */
    hash: text('hash').notNull(),
    frozenAt: timestamp('frozen_at', { withTimezone: true }).notNull(),
  },
  (t) => [unique('record_snapshots_job_revision_uq').on(t.jobId, t.revision)],
);

/**
 * The technician's reply to a return, given when resubmitting: one row per answered return
 * (the signature that returned the job). Rows are never changed; every round is kept.
 */
export const returnReplies = pgTable(
  'return_replies',
  {
    id: uuid('id').primaryKey().defaultRandom(),
    jobId: uuid('job_id')
      .notNull()
      .references(() => jobs.id),
    /** The return signature this answers. */
    signatureId: uuid('signature_id')
      .notNull()
      .references(() => signatures.id),
    revision: integer('revision').notNull(),
    reply: text('reply').notNull(),
    byId: uuid('by_id')
      .notNull()
      .references(() => users.id),
    /** Printed name at the time of the reply. */
    byName: text('by_name').notNull(),
    at: timestamp('at', { withTimezone: true }).notNull(),
  },
  (t) => [index('return_replies_job_idx').on(t.jobId), unique('return_replies_signature_uq').on(t.signatureId)],
);
