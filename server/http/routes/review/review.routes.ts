import { z } from 'zod';
import { ReviewBodySchema, RevisionBodySchema } from '../../../../shared/schemas/records';
import { ReviewTraceQuerySchema } from '../../../../shared/schemas/trace';
import { IdParamSchema } from '../../../../shared/schemas/users';
import type { ReviewService } from '../../../services/review.service';
import { currentUser } from '../../middleware/auth';
import { input, validate } from '../../middleware/validate';
import { routeTable } from '../../route-table';
import { decimalIndex } from '../../../../shared/schemas/numbers';

const RevisionParamSchema = z.object({ id: z.string().uuid('Not a valid id'), revision: decimalIndex('Revision', 1, 10_000) });

/** Review, e-signature and revisions of a job record (DESIGN.md §3.7). */
export function reviewRoutes(review: ReviewService) {
  const t = routeTable('/api/jobs');
  const one = { params: IdParamSchema };
  t.add('get', '/:id/review', 'jobs.read', validate(one), async (_req, res) => {
    res.json(await review.bundle(currentUser(res), input(res, one).params.id));
  });
  const sign = { params: IdParamSchema, body: ReviewBodySchema };
  t.add('post', '/:id/review', 'jobs.review', validate(sign), async (_req, res) => {
    const { params, body } = input(res, sign);
    res.json(await review.review(currentUser(res), params.id, body));
  });
  t.add('get', '/:id/signatures', 'jobs.read', validate(one), async (_req, res) => {
    res.json({ items: await review.signatures(input(res, one).params.id) });
  });
  const record = { params: IdParamSchema, query: z.object({ revision: z.coerce.number().int().min(1).max(10_000).optional() }) };
  t.add('get', '/:id/record', 'jobs.read', validate(record), async (_req, res) => {
    const { params, query } = input(res, record);
    res.json(await review.record(params.id, query.revision));
  });
  t.add('get', '/:id/revisions', 'jobs.read', validate(one), async (_req, res) => {
    res.json({ items: await review.revisions(input(res, one).params.id) });
  });
  const open = { params: IdParamSchema, body: RevisionBodySchema };
  t.add('post', '/:id/revisions', 'jobs.review', validate(open), async (_req, res) => {
    const { params, body } = input(res, open);
    res.status(201).json(await review.openRevision(currentUser(res), params.id, body.reason));
  });
  const rev = { params: RevisionParamSchema };
  t.add('get', '/:id/revisions/:revision', 'jobs.read', validate(rev), async (_req, res) => {
    const { params } = input(res, rev);
    res.json(await review.revision(params.id, params.revision));
  });
  return t;
}

/** The review page's trace of a run: raw samples in a window or a min/mean/max envelope. */
export function reviewTraceRoutes(review: ReviewService) {
  const t = routeTable('/api/review');
  // The lead's inbox: jobs awaiting review, oldest submission first.
  t.add('get', '/inbox', 'jobs.review', async (_req, res) => {
    res.json(await review.inbox());
  });
  const trace = { params: IdParamSchema, query: ReviewTraceQuerySchema };
  t.add('get', '/runs/:id/trace', 'runs.read', validate(trace), async (_req, res) => {
    const { params, query } = input(res, trace);
    res.json(await review.trace(params.id, query));
  });
  return t;
}
