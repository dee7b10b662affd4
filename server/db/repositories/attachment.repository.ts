import { and, asc, eq } from 'drizzle-orm';
import type { Db } from '../client';
import { attachments } from '../schema';

export type AttachmentRow = typeof attachments.$inferSelect;
export type AttachmentInsert = typeof attachments.$inferInsert;

/** Links between stored files and the instruments, standards and jobs they belong to. */
export function attachmentRepository(db: Db) {
  return {
    async create(values: AttachmentInsert): Promise<AttachmentRow> {
      const [row] = await db.insert(attachments).values(values).returning();
      return row!;
    },
    async list(entity: AttachmentRow['entity'], entityId: string): Promise<AttachmentRow[]> {
      return db
        .select()
        .from(attachments)
        .where(and(eq(attachments.entity, entity), eq(attachments.entityId, entityId)))
        .orderBy(asc(attachments.createdAt));
    },
    async byFile(fileId: string): Promise<AttachmentRow | undefined> {
      const [row] = await db.select().from(attachments).where(eq(attachments.fileId, fileId)).limit(1);
      return row;
    },
  };
}
