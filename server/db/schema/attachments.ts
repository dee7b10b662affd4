import { bigint, index, pgTable, text, timestamp, uuid } from 'drizzle-orm/pg-core';
import { users } from './users';

/**
 * Uploaded files attached to register entries and jobs (instrument datasheets, job photos,
 * standards' certificates). The bytes live in the content-addressed file store under
 * `DATA_DIR/uploads`; this row links a stored file (its SHA-256 id) to what it belongs to.
 */
export const attachments = pgTable(
  'attachments',
  {
    id: uuid('id').primaryKey().defaultRandom(),
    entity: text('entity', { enum: ['instrument', 'standard', 'job'] }).notNull(),
    entityId: uuid('entity_id').notNull(),
    kind: text('kind', { enum: ['datasheet', 'certificate', 'photo'] }).notNull(),
    /** SHA-256 of the content: the file store's id. */
    fileId: text('file_id').notNull(),
    type: text('type').notNull(),
    /** Size in bytes. */
    size: bigint('size', { mode: 'number' }).notNull(),
    originalName: text('original_name').notNull(),
    uploadedBy: uuid('uploaded_by')
      .notNull()
      .references(() => users.id),
    createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow(),
    /**
     * Set when someone removed the file from what it belongs to (with a reason, audited). The row
     * and the stored bytes are kept: a record that cited the file can still show it.
     */
    removedAt: timestamp('removed_at', { withTimezone: true }),
    removedBy: uuid('removed_by').references(() => users.id),
    removedReason: text('removed_reason'),
  },
  (t) => [index('attachments_entity_idx').on(t.entity, t.entityId), index('attachments_file_idx').on(t.fileId)],
);
