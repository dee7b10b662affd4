import type { RequestHandler, Response } from 'express';
import { z } from 'zod';
import { RemoveAttachmentBodySchema } from '../../../../shared/schemas/files';
import { IdParamSchema } from '../../../../shared/schemas/users';
import type { SessionUser } from '../../../services/auth.service';
import type { FileService } from '../../../services/file.service';
import { currentUser } from '../../middleware/auth';
import { input, validate } from '../../middleware/validate';
import type { Action } from '../../policy';
import { routeTable, type RouteTable } from '../../route-table';

const one = { params: IdParamSchema };

type Upload = Parameters<FileService['jobPhoto']>[2];

/** One kind of attachment of a record: where it is uploaded and listed, and who may do either. */
interface AttachmentKind {
  entity: Parameters<FileService['list']>[0];
  /** Upload (POST) and list (GET) paths under the table's base. */
  paths: [upload: string, list: string];
  actions: [upload: Action, list: Action];
  /** Whether the record exists and this user may add to it: runs before multer reads the body. */
  check: (id: string, res: Response) => Promise<unknown>;
  save: (user: SessionUser, id: string, file: Upload) => Promise<unknown>;
}

function addAttachmentRoutes(table: RouteTable, files: FileService, kind: AttachmentKind): RouteTable {
  const mayUpload: RequestHandler = async (_req, res, next) => {
    await kind.check(input(res, one).params.id, res);
    next();
  };
  table.add('post', kind.paths[0], kind.actions[0], validate(one), mayUpload, files.upload, async (req, res) => {
    res.status(201).json(await kind.save(currentUser(res), input(res, one).params.id, req.file));
  });
  table.add('get', kind.paths[1], kind.actions[1], validate(one), async (_req, res) => {
    res.json({ items: await files.list(kind.entity, input(res, one).params.id) });
  });
  return table;
}

/** Upload routes: the permission and existence checks run before multer reads the body. */
export function uploadRoutes(files: FileService): RouteTable[] {
  const standards = addAttachmentRoutes(routeTable('/api/standards'), files, {
    entity: 'standard', paths: ['/:id/certificate', '/:id/certificates'], actions: ['registers.write', 'registers.read'],
    check: (id) => files.checkStandard(id), save: (user, id, file) => files.standardCertificate(user, id, file),
  });
  const instruments = addAttachmentRoutes(routeTable('/api/instruments'), files, {
    entity: 'instrument', paths: ['/:id/datasheet', '/:id/datasheets'], actions: ['registers.write', 'registers.read'],
    check: (id) => files.checkInstrument(id), save: (user, id, file) => files.instrumentDatasheet(user, id, file),
  });
  const jobs = addAttachmentRoutes(routeTable('/api/jobs'), files, {
    entity: 'job', paths: ['/:id/photos', '/:id/photos'], actions: ['jobs.perform', 'jobs.read'],
    check: (id, res) => files.checkPhoto(currentUser(res), id), save: (user, id, file) => files.jobPhoto(user, id, file),
  });

  // Removing a file needs a reason; who may remove what, and the lock, are the service's (photos: the
  // assigned technician; register files: lead or admin; never on a submitted or approved record).
  const attachmentsTable = routeTable('/api/attachments');
  const remove = { params: IdParamSchema, body: RemoveAttachmentBodySchema };
  attachmentsTable.add('delete', '/:id', 'jobs.read', validate(remove), async (_req, res) => {
    const { params, body } = input(res, remove);
    res.json(await files.remove(currentUser(res), params.id, body.reason));
  });

  const download = routeTable('/api/files');
  // The id is checked by the service (64 hex digits), so a traversal attempt never reaches the file system.
  // `?inline=1` opens a PDF or an image in the browser (checked content types only); otherwise it downloads.
  const file = { params: z.object({ id: z.string().max(200) }), query: z.object({ inline: z.enum(['0', '1']).optional() }) };
  download.add('get', '/:id', 'registers.read', validate(file), async (_req, res) => {
    const { params, query } = input(res, file);
    const f = await files.open(params.id);
    const name = f.meta.originalName.replace(/[^\w.\- ]/g, '_');
    const inline = query.inline === '1' && /^(application\/pdf|image\/(png|jpeg|webp))$/.test(f.meta.type);
    res.set({
      'Content-Type': f.meta.type,
      'Content-Length': String(f.meta.size),
      'Content-Disposition': `${inline ? 'inline' : 'attachment'}; filename="${name}"; filename*=UTF-8''${encodeURIComponent(f.meta.originalName)}`,
      'X-Content-Type-Options': 'nosniff',
      'Cache-Control': 'private, max-age=3600',
    });
    f.stream.on('error', () => res.destroy());
    f.stream.pipe(res);
  });
  return [standards, instruments, jobs, attachmentsTable, download];
}
