import { z } from 'zod';
import { EmptyBodySchema } from '../../../../shared/schemas/users';
import type { AuditService } from '../../../services/audit.service';
import type { BenchService } from '../../../services/bench.service';
import { currentUser } from '../../middleware/auth';
import { input, validate } from '../../middleware/validate';
import { routeTable } from '../../route-table';

const ReviewQuerySchema = z.object({ limit: z.coerce.number().int().min(1).max(1000).default(100) });

/**
 * Storage review: samples the database refused (quarantined) and damaged journal batches set
 * aside, and their acknowledgement by an admin or lead, audited.
 */
export function storageRoutes(bench: BenchService, audit: AuditService) {
  const t = routeTable('/api/bench/storage');
  const q = { query: ReviewQuerySchema };
  t.add('get', '/', 'bench.read', validate(q), async (_req, res) => {
    res.json(await bench.storageReview(input(res, q).query.limit));
  });
  // The acknowledgement takes no input: any body is refused (400), so a malformed or forged request
  // never clears the set-aside rows by accident.
  t.add('post', '/acknowledge', 'storage.acknowledge', validate({ body: EmptyBodySchema }), async (_req, res) => {
    const user = currentUser(res);
    const done = await bench.acknowledgeStorage(user.id);
    if (done.rows.length || done.batches) {
      await audit.record({ id: user.id, email: user.email }, 'storage.acknowledged', 'sample-storage', bench.benchId, undefined, {
        quarantinedSeqs: done.rows,
        damagedBatches: done.batches,
      });
    }
    res.json({ acknowledged: { rows: done.rows.length, batches: done.batches } });
  });
  return t;
}
