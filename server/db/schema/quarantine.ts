import { bigint, doublePrecision, index, pgTable, text, timestamp, uuid } from 'drizzle-orm/pg-core';

/**
 * Samples the database refused to store (a data exception such as a NUL byte) or could not store
 * unaltered (a lone UTF-16 surrogate), set aside by the sample writer so the rows after them are
 * stored. Every text is kept in a storable form: `row_json` is the whole row as JSON text (lossless:
 * JSON escapes control characters and lone surrogates), the other text columns are display forms.
 * Kept until an admin or lead has reviewed them (`acknowledged_at`), and after.
 */
export const sampleQuarantine = pgTable(
  'sample_quarantine',
  {
    seq: bigint('seq', { mode: 'number' }).primaryKey(),
    benchId: text('bench_id').notNull(),
    device: text('device').notNull(),
    runId: text('run_id'),
    /** The raw line as a JSON string literal (`"A\u0000B"`). */
    rawJson: text('raw_json').notNull(),
    /** The whole journal row as JSON text. */
    rowJson: text('row_json').notNull(),
    wallMs: doublePrecision('wall_ms').notNull(),
    /** Why it was set aside (the database's SQLSTATE and message, or the writer's own check). */
    reason: text('reason').notNull(),
    at: timestamp('at', { withTimezone: true }).notNull().defaultNow(),
    acknowledgedAt: timestamp('acknowledged_at', { withTimezone: true }),
    acknowledgedBy: uuid('acknowledged_by'),
  },
  (t) => [index('sample_quarantine_unacknowledged_idx').on(t.acknowledgedAt)],
);
