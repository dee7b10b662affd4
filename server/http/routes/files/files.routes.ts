import type { RequestHandler } from 'express';
import { z } from 'zod';
import { RemoveAttachmentBodySchema } from '../../../../shared/schemas/files';
import { IdParamSchema } from '../../../../shared/schemas/users';
import type { FileService } from '../../../services/file.service';
import { currentUser } from '../../middleware/auth';
import { input, validate } from '../../middleware/validate';
import { routeTable, type RouteTable } from '../../route-table';

const one = { params: IdParamSchema };

/** Upload routes: the permission and existence checks run before multer reads the body. */
export function uploadRoutes(files: FileService): RouteTable[] {
  const standards = routeTable('/api/standards');
  const standardExists: RequestHandler = async (_req, res, next) => {
    await files.checkStandard(input(res, one).params.id);
    next();
  };
  standards.add('post', '/:id/certificate', 'registers.write', validate(one), standardExists, files.upload, async (req, res) => {
    res.status(201).json(await files.standardCertificate(currentUser(res), input(res, one).params.id, req.file));
  });
  standards.add('get', '/:id/certificates', 'registers.read', validate(one), async (_req, res) => {
    res.json({ items: await files.list('standard', input(res, one).params.id) });
  });

  const instruments = routeTable('/api/instruments');
  const instrumentExists: RequestHandler = async (_req, res, next) => {
    await files.checkInstrument(input(res, one).params.id);
    next();
  };
  instruments.add('post', '/:id/datasheet', 'registers.write', validate(one), instrumentExists, files.upload, async (req, res) => {
    res.status(201).json(await files.instrumentDatasheet(currentUser(res), input(res, one).params.id, req.file));
  });
  instruments.add('get', '/:id/datasheets', 'registers.read', validate(one), async (_req, res) => {
    res.json({ items: await files.list('instrument', input(res, one).params.id) });
  });

  const jobs = routeTable('/api/jobs');
  const mayAddPhoto: RequestHandler = async (_req, res, next) => {
    await files.checkPhoto(currentUser(res), input(res, one).params.id);
    next();
  };
  jobs.add('post', '/:id/photos', 'jobs.perform', validate(one), mayAddPhoto, files.upload, async (req, res) => {
    res.status(201).json(await files.jobPhoto(currentUser(res), input(res, one).params.id, req.file));
  });
  jobs.add('get', '/:id/photos', 'jobs.read', validate(one), async (_req, res) => {
    res.json({ items: await files.list('job', input(res, one).params.id) });
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
