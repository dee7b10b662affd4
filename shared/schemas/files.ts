import { z } from 'zod';

/** What an uploaded file is to what it belongs to. */
export const ATTACHMENT_KINDS = ['datasheet', 'certificate', 'photo'] as const;

/** An uploaded file attached to an instrument (datasheet), a standard (certificate) or a job (as-found photo). */
export const AttachmentSchema = z.object({
  id: z.string(),
  kind: z.enum(ATTACHMENT_KINDS),
  /** The file store's id (SHA-256 of the content); `GET /api/files/:fileId` serves it. */
  fileId: z.string(),
  /** Content type as checked on upload (e.g. `application/pdf`). */
  type: z.string(),
  /** Bytes. */
  size: z.number(),
  originalName: z.string(),
  uploadedBy: z.string(),
  /** Printed name of who uploaded it. Additive. */
  uploadedByName: z.string().nullable().optional(),
  /** ISO date-time, UTC. */
  createdAt: z.string(),
});
export type Attachment = z.infer<typeof AttachmentSchema>;

export const AttachmentListSchema = z.object({ items: z.array(AttachmentSchema) });

/** Body of `DELETE /api/attachments/:id`: removing a file needs a reason, kept in the audit trail. */
export const RemoveAttachmentBodySchema = z.object({
  reason: z.string({ message: 'Say why the file is removed' }).trim().min(5, 'Say why the file is removed (at least 5 characters)').max(500, 'Keep the reason under 500 characters'),
});
export type RemoveAttachmentBody = z.input<typeof RemoveAttachmentBodySchema>;
