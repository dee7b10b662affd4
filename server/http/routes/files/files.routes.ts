import type { RequestHandler } from 'express';
import { z } from 'zod';
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

  const instruments = routeTable('/api/instruments');
  const instrumentExists: RequestHandler = async (_req, res, next) => {
    await files.checkInstrument(input(res, one).params.id);
    next();
  };
  instruments.add('post', '/:id/datasheet', 'registers.write', validate(one), instrumentExists, files.upload, async (req, res) => {
    res.status(201).json(await files.instrumentDatasheet(currentUser(res), input(res, one).params.id, req.file));
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

  const download = routeTable('/api/files');
  // The id is checked by the service (64 hex digits), so a traversal attempt never reaches the file system.
  const file = { params: z.object({ id: z.string().max(200) }) };
  download.add('get', '/:id', 'registers.read', validate(file), async (_req, res) => {
    const f = await files.open(input(res, file).params.id);
    const name = f.meta.originalName.replace(/[^\w.\- ]/g, '_');
    res.set({
      'Content-Type': f.meta.type,
      'Content-Length': String(f.meta.size),
      'Content-Disposition': `attachment; filename="${name}"; filename*=UTF-8''${encodeURIComponent(f.meta.originalName)}`,
      'X-Content-Type-Options': 'nosniff',
      'Cache-Control': 'private, max-age=3600',
    });
    f.stream.on('error', () => res.destroy());
    f.stream.pipe(res);
  });
  return [standards, instruments, jobs, download];
}
