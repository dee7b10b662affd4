import { jsonb, pgTable, timestamp, uuid } from 'drizzle-orm/pg-core';
import { jobs } from './registers';

/**
 * A job's HART record (shared/schemas/hart-job.ts): the device as found and as left (commands 0,
 * 13, 15), the disagreements with the register and how they were resolved, and every write
 * command with its request, reply, who and when. One row per job.
 */
export const jobHart = pgTable('job_hart', {
  jobId: uuid('job_id')
    .primaryKey()
    .references(() => jobs.id),
  asFound: jsonb('as_found'),
  asLeft: jsonb('as_left'),
  mismatches: jsonb('mismatches').notNull().default([]),
  resolution: jsonb('resolution'),
  writes: jsonb('writes').notNull().default([]),
  trims: jsonb('trims').notNull().default([]),
  updatedAt: timestamp('updated_at', { withTimezone: true }).notNull().defaultNow(),
});
