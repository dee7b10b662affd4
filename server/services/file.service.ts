import fsp from 'node:fs/promises';
import type { RequestHandler } from 'express';
import type { Db } from '../db/client';
import { attachmentRepository, type AttachmentRow } from '../db/repositories/attachment.repository';
import { instrumentRepository, jobRepository, standardRepository } from '../db/repositories/register.repository';
import { badRequest, forbidden, locked, notFound } from '../errors';
import { isFileId, type FileStore, type OpenedFile } from '../storage/file-store';
import { normaliseDeclaredType, type AllowedType } from '../storage/sniff';
import { UploadRejectedError, type Uploads } from '../storage/upload';
import type { Actor, AuditService } from './audit.service';
import type { SessionUser } from './auth.service';
import type { Attachment } from '../../shared/schemas/files';

type UploadedFile = Express.Multer.File | undefined;
const PDF: AllowedType[] = ['application/pdf'];
const IMAGES: AllowedType[] = ['image/png', 'image/jpeg', 'image/webp'];

export type { Attachment } from '../../shared/schemas/files';
const toAttachment = (r: AttachmentRow & { uploadedByName?: string | null }): Attachment => ({
  id: r.id,
  kind: r.kind,
  fileId: r.fileId,
  type: r.type,
  size: r.size,
  originalName: r.originalName,
  uploadedBy: r.uploadedBy,
  uploadedByName: r.uploadedByName ?? null,
  createdAt: r.createdAt.toISOString(),
});

/**
 * Uploaded files: standards' calibration certificates, instrument datasheets and job photos.
 * Who may upload is checked before the body is read; the type is checked against the route's
 * list and then by magic bytes; a refused file leaves nothing behind. Every attachment is audited.
 */
export function createFileService(db: Db, deps: { audit: AuditService; uploads: Uploads; store: FileStore }) {
  const attachments = attachmentRepository(db);
  const standards = standardRepository(db);
  const instruments = instrumentRepository(db);
  const jobs = jobRepository(db);

  async function accept(file: UploadedFile, allowed: AllowedType[]) {
    if (file) {
      const declared = normaliseDeclaredType(file.mimetype);
      if (!declared || !allowed.includes(declared)) {
        await fsp.rm(file.path, { force: true }).catch(() => {});
        throw new UploadRejectedError('unsupported_type', `Send ${allowed.map((t) => t.split('/')[1]!.toUpperCase()).join(', ')} here, not '${file.mimetype}'`);
      }
    }
    return deps.uploads.accept(file);
  }

  async function attach(actor: Actor, entity: AttachmentRow['entity'], entityId: string, kind: AttachmentRow['kind'], file: UploadedFile, allowed: AllowedType[]) {
    const put = await accept(file, allowed);
    const row = await attachments.create({ entity, entityId, kind, fileId: put.id, type: put.type, size: put.size, originalName: put.originalName, uploadedBy: actor.id });
    const out = toAttachment({ ...row, uploadedByName: (actor as Partial<SessionUser>).name ?? null });
    await deps.audit.record(actor, 'file.attached', entity, entityId, undefined, { kind, fileId: put.id, type: put.type, size: put.size, name: put.originalName });
    return out;
  }

  const service = {
    /** multer for one file in the form field `file` (size-limited, to a temp dir). */
    upload: deps.uploads.multer.single('file') as RequestHandler,

    async checkStandard(id: string) {
      if (!(await standards.get(id))) throw notFound('No such standard');
    },
    async checkInstrument(id: string) {
      if (!(await instruments.get(id))) throw notFound('No such instrument');
    },
    /** Only the assigned technician adds photos, and not to a submitted or approved record. */
    async checkPhoto(user: SessionUser, jobId: string) {
      const job = await jobs.get(jobId);
      if (!job) throw notFound('No such job');
      if (job.assigneeId !== user.id) throw forbidden('Only the assigned technician adds photos to this job');
      if (job.status === 'approved') throw locked(`Revision ${job.revision} of this record is approved and locked`);
      if (job.status === 'submitted') throw locked('The job is submitted for review');
    },

    /** A PDF calibration certificate for a reference standard; becomes the standard's certificate file. */
    async standardCertificate(actor: Actor, standardId: string, file: UploadedFile) {
      const before = (await standards.get(standardId))!;
      const a = await attach(actor, 'standard', standardId, 'certificate', file, PDF);
      await standards.update(standardId, { certificateFileId: a.fileId });
      await deps.audit.record(actor, 'standard.certificate-attached', 'standard', standardId, { certificateFileId: before.certificateFileId }, { certificateFileId: a.fileId });
      return a;
    },
    async instrumentDatasheet(actor: Actor, instrumentId: string, file: UploadedFile) {
      return attach(actor, 'instrument', instrumentId, 'datasheet', file, PDF);
    },
    async jobPhoto(actor: Actor, jobId: string, file: UploadedFile) {
      return attach(actor, 'job', jobId, 'photo', file, IMAGES);
    },
    async list(entity: AttachmentRow['entity'], entityId: string): Promise<Attachment[]> {
      if (entity === 'job' && !(await jobs.get(entityId))) throw notFound('No such job');
      if (entity === 'standard' && !(await standards.get(entityId))) throw notFound('No such standard');
      if (entity === 'instrument' && !(await instruments.get(entityId))) throw notFound('No such instrument');
      return (await attachments.list(entity, entityId)).map(toAttachment);
    },

    /**
     * Removes a file from what it belongs to, with a reason (audited). The row and the bytes are
     * kept. Refused on a locked record: a photo of a submitted or approved job, or a standard's
     * certificate that a submitted or approved record cites. Photos: the assigned technician;
     * certificates and datasheets: a lead or an admin.
     */
    async remove(user: SessionUser, id: string, reason: string): Promise<{ removed: Attachment; certificateFileId?: string | null }> {
      const a = await attachments.get(id);
      if (!a || a.removedAt) throw notFound('No such file (it may have been removed already)');
      if (a.entity === 'job') {
        const job = await jobs.get(a.entityId);
        if (!job) throw notFound('No such job');
        if (job.status === 'approved') throw locked(`Revision ${job.revision} of this record is approved and locked; its photos stay as they are`);
        if (job.status === 'submitted') throw locked('The job is submitted for review; its photos stay as they are until it is returned');
        if (job.assigneeId !== user.id) throw forbidden('Only the assigned technician removes photos from this job');
      } else {
        if (user.role !== 'lead' && user.role !== 'admin') throw forbidden('Only a lead or an admin removes register files');
        if (a.entity === 'standard') {
          const citing = await attachments.recordsCitingCertificate(a.fileId);
          if (citing.length)
            throw locked(`This certificate is part of ${citing.length === 1 ? 'a submitted or approved record' : `${citing.length} submitted or approved records`}; it cannot be removed. Upload the new certificate instead.`);
        }
      }
      if (!(await attachments.remove(id, user.id, reason))) throw notFound('No such file (it was removed meanwhile)');
      let certificateFileId: string | null | undefined;
      if (a.entity === 'standard') {
        const st = await standards.get(a.entityId);
        if (st && st.certificateFileId === a.fileId) {
          // The standard's certificate becomes the newest one still attached, or none.
          certificateFileId = (await attachments.list('standard', a.entityId)).at(-1)?.fileId ?? null;
          await standards.update(a.entityId, { certificateFileId });
        }
      }
      await deps.audit.record(user, 'file.removed', a.entity, a.entityId, { kind: a.kind, fileId: a.fileId, name: a.originalName }, {
        attachmentId: a.id,
        reason,
        ...(certificateFileId !== undefined ? { certificateFileId } : {}),
      });
      return { removed: toAttachment(a), ...(certificateFileId !== undefined ? { certificateFileId } : {}) };
    },

    /** A stored file by its id (64 hex digits); anything else is refused before it reaches the file system. */
    async open(id: string): Promise<OpenedFile> {
      if (!isFileId(id)) throw badRequest('Not a file id');
      const f = await deps.store.open(id);
      if (!f) throw notFound('No such file');
      return f;
    },
  };
  return service;
}
export type FileService = ReturnType<typeof createFileService>;
