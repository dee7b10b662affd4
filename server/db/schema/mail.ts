import { index, jsonb, pgTable, text, timestamp, uuid } from 'drizzle-orm/pg-core';

/**
 * Messages the local fake SMTP server received (no SMTP_URL configured): what the team would
 * have been sent, shown to admins on the Outbox page.
 */
export const outboxMessages = pgTable(
  'outbox_messages',
  {
    id: uuid('id').primaryKey(),
    receivedAt: timestamp('received_at', { withTimezone: true }).notNull(),
    fromAddress: text('from_address').notNull(),
    /** Every address the message was delivered to. */
    to: jsonb('to').$type<string[]>().notNull(),
    subject: text('subject').notNull(),
    text: text('text').notNull(),
    html: text('html'),
    messageId: text('message_id'),
    /** The whole message as received. */
    raw: text('raw').notNull(),
  },
  (t) => [index('outbox_messages_received_idx').on(t.receivedAt)],
);

/**
 * Scheduled mail: the last slot each schedule ran for. A schedule claims a slot (its most recent
 * due time) by moving `lastSlot` forward in one statement before sending, so a restart, or a second
 * server on the same database, never sends the same slot twice.
 */
export const mailSchedules = pgTable('mail_schedules', {
  name: text('name').primaryKey(),
  /** The scheduled time this schedule last ran for. */
  lastSlot: timestamp('last_slot', { withTimezone: true }).notNull(),
  /** When it actually ran. */
  lastRunAt: timestamp('last_run_at', { withTimezone: true }).notNull(),
});
