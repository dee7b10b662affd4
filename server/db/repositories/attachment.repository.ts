import { and, asc, eq, inArray, isNull, lt, or, sql } from 'drizzle-orm';
import type { Db } from '../client';
import { attachments, jobs, recordSnapshots, users } from '../schema';

export type AttachmentRow = typeof attachments.$inferSelect;
export type AttachmentInsert = typeof attachments.$inferInsert;

/** Links between stored files and the instruments, standards and jobs they belong to. */
export function attachmentRepository(db: Db) {
  return {
    async create(values: AttachmentInsert): Promise<AttachmentRow> {
      const [row] = await db.insert(attachments).values(values).returning();
      return row!;
    },
    /** Files attached to one record and not removed, oldest first, with the uploader's name. */
    async list(entity: AttachmentRow['entity'], entityId: string): Promise<Array<AttachmentRow & { uploadedByName: string | null }>> {
      const rows = await db
        .select({ a: attachments, name: users.name })
        .from(attachments)
        .leftJoin(users, eq(users.id, attachments.uploadedBy))
        .where(and(eq(attachments.entity, entity), eq(attachments.entityId, entityId), isNull(attachments.removedAt)))
        .orderBy(asc(attachments.createdAt));
      return rows.map((r) => ({ ...r.a, uploadedByName: r.name }));
    },
    async get(id: string): Promise<AttachmentRow | undefined> {
      const [row] = await db.select().from(attachments).where(eq(attachments.id, id)).limit(1);
      return row;
    },
    /** Marks a file removed (kept, never deleted); false when it was removed meanwhile. */
    async remove(id: string, by: string, reason: string): Promise<boolean> {
      const moved = await db
        .update(attachments)
        .set({ removedAt: new Date(), removedBy: by, removedReason: reason })
        .where(and(eq(attachments.id, id), isNull(attachments.removedAt)))
        .returning({ id: attachments.id });
      return moved.length > 0;
    },
    /** Jobs with a locked frozen record (submitted, approved, or an approved earlier revision) that cites this certificate file. */
    async recordsCitingCertificate(fileId: string): Promise<Array<{ jobId: string; status: string }>> {
      return db
        .select({ jobId: jobs.id, status: jobs.status })
        .from(recordSnapshots)
        .innerJoin(jobs, eq(jobs.id, recordSnapshots.jobId))
        .where(and(or(inArray(jobs.status, ['submitted', 'approved']), lt(recordSnapshots.revision, jobs.revision)), sql`${recordSnapshots.snapshot} -> 'standards' @> ${JSON.stringify([{ certificateFileId: fileId }])}::jsonb`));
    },
    async byFile(fileId: string): Promise<AttachmentRow | undefined> {
      const [row] = await db.select().from(attachments).where(eq(attachments.fileId, fileId)).limit(1);
      return row;
    },
  };
}
