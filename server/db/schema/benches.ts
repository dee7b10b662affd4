import { bigint, pgTable, text, timestamp, uuid } from 'drizzle-orm/pg-core';
import { users } from './users';

/**
 * Benches other than this server's own ports: bench agents registered by a lead or an admin, each
 * with its own credential (a random token shown once; only its SHA-256 is kept) that can be revoked.
 * A browser forwarding Web Serial needs no row: it feeds the signed-in user's own browser bench.
 */
export const benches = pgTable('benches', {
  /** The bench id lines and runs name (lower-case letters, digits and hyphens). */
  id: text('id').primaryKey(),
  kind: text('kind', { enum: ['agent'] }).notNull().default('agent'),
  /** Where the bench is, as its registrar described it. */
  label: text('label').notNull(),
  /** SHA-256 of the agent token, hex. */
  tokenHash: text('token_hash').notNull().unique(),
  /** First characters of the token, to tell tokens apart in the list (not secret on their own). */
  tokenHint: text('token_hint').notNull(),
  createdBy: uuid('created_by').references(() => users.id),
  createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow(),
  revokedAt: timestamp('revoked_at', { withTimezone: true }),
  revokedBy: uuid('revoked_by').references(() => users.id),
});

/**
 * The last batch accepted from each forwarding sender (an agent's store-and-forward queue, a
 * browser tab's bridge), so a batch resent after a lost acknowledgement or a server restart is
 * stored once. `lastSeq` is the hub sequence number of the batch's last stored line.
 */
export const forwardSenders = pgTable('forward_senders', {
  /** `agent:<benchId>:<senderId>` or `browser:<userId>:<senderId>`. */
  key: text('key').primaryKey(),
  benchId: text('bench_id').notNull(),
  batchSeq: bigint('batch_seq', { mode: 'number' }).notNull(),
  lastSeq: bigint('last_seq', { mode: 'number' }).notNull(),
  updatedAt: timestamp('updated_at', { withTimezone: true }).notNull().defaultNow(),
});
