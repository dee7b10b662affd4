import { QueueQuerySchema } from '../../../../shared/schemas/queue';
import { RecordsQuerySchema } from '../../../../shared/schemas/records';
import type { DriftService } from '../../../services/drift.service';
import type { ReviewService } from '../../../services/review.service';
import { currentUser } from '../../middleware/auth';
import { input, validate } from '../../middleware/validate';
import { routeTable } from '../../route-table';

/** Submitted and approved job records (the Records page). */
export function recordsRoutes(review: ReviewService) {
  const t = routeTable('/api/records');
  const list = { query: RecordsQuerySchema };
  t.add('get', '/', 'jobs.read', validate(list), async (_req, res) => {
    res.json({ items: await review.records(input(res, list).query) });
  });
  return t;
}

/** Due work: open jobs (own first for a technician) and instruments that need a job. */
export function queueRoutes(drift: DriftService) {
  const t = routeTable('/api/queue');
  const q = { query: QueueQuerySchema };
  t.add('get', '/', 'jobs.read', validate(q), async (_req, res) => {
    res.json(await drift.queue(currentUser(res), input(res, q).query.withinDays));
  });
  return t;
}
