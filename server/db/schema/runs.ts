import { bigint, doublePrecision, index, integer, jsonb, pgTable, primaryKey, text, timestamp, uuid } from 'drizzle-orm/pg-core';
import type { RunResults } from '../../../shared/schemas/runs';
import { jobs } from './registers';

export const runs = pgTable(
  'runs',
  {
    id: uuid('id').primaryKey().defaultRandom(),
    jobId: uuid('job_id')
      .notNull()
      .references(() => jobs.id),
    kind: text('kind', { enum: ['mode-check', 'as-found', 'trim', 'as-left'] }).notNull(),
    status: text('status', { enum: ['running', 'paused', 'complete', 'aborted'] }).notNull().default('running'),
    /** Plan and settings frozen at start (points, window, hold time, limits). */
    plan: jsonb('plan').notNull(),
    /** shared/calc EvaluateOutput; read through `parseRunResults` in the repositories. */
    results: jsonb('results').$type<RunResults | null>(),
    startedBy: uuid('started_by'),
    startedAt: timestamp('started_at', { withTimezone: true }).notNull().defaultNow(),
    endedAt: timestamp('ended_at', { withTimezone: true }),
  },
  (t) => [index('runs_job_idx').on(t.jobId)],
);

export const points = pgTable(
  'points',
  {
    runId: uuid('run_id')
      .notNull()
      .references(() => runs.id),
    index: integer('index').notNull(),
    state: text('state').notNull().default('waiting'),
    flags: jsonb('flags').notNull().default([]),
    capture: jsonb('capture'),
    reason: text('reason'),
    updatedAt: timestamp('updated_at', { withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [primaryKey({ columns: [t.runId, t.index] })],
);

/** Every raw line received from an instrument, with its parse and timestamps. */
export const samples = pgTable(
  'samples',
  {
    seq: bigint('seq', { mode: 'number' }).primaryKey(),
    benchId: text('bench_id').notNull(),
    device: text('device').notNull(),
    runId: uuid('run_id'),
    raw: text('raw').notNull(),
    value: doublePrecision('value'),
    unit: text('unit'),
    /** Wall-clock arrival, ms since epoch. */
    wallMs: doublePrecision('wall_ms').notNull(),
    /** Monotonic arrival, ms (process clock). */
    monoMs: doublePrecision('mono_ms').notNull(),
    /** Who delivered the line: this server's own port, a registered agent or a browser (Web Serial). */
    sourceKind: text('source_kind', { enum: ['port', 'agent', 'browser'] }).notNull().default('port'),
    /** The port's or agent's bench id, or the forwarding user's id; null on rows stored before it was kept (the bench's own port). */
    sourceId: text('source_id'),
    /** The sender's own wall clock for a forwarded line (metadata only), ms since epoch. */
    clientWallMs: doublePrecision('client_wall_ms'),
  },
  // (run_id, wall_ms, seq) is the order a trace is read in, page by page (keyset on wall_ms, seq).
  (t) => [index('samples_run_time_idx').on(t.runId, t.wallMs, t.seq)],
);

/** Append-only, hash-chained audit trail (a trigger refuses UPDATE and DELETE). */
export const auditEvents = pgTable(
  'audit_events',
  {
    id: bigint('id', { mode: 'number' }).primaryKey(),
    at: timestamp('at', { withTimezone: true }).notNull(),
    actorId: uuid('actor_id'),
    actorEmail: text('actor_email'),
    action: text('action').notNull(),
    entity: text('entity').notNull(),
    entityId: text('entity_id'),
    before: jsonb('before'),
    after: jsonb('after'),
    prevHash: text('prev_hash').notNull(),
    hash: text('hash').notNull(),
  },
  (t) => [index('audit_entity_idx').on(t.entity, t.entityId)],
);
