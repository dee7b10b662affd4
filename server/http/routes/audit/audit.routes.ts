import { z } from 'zod';
import type { AuditService } from '../../../services/audit.service';
import { input, validate } from '../../middleware/validate';
import { routeTable } from '../../route-table';

const AuditQuerySchema = z.object({
  entity: z.string().max(40).optional(),
  entityId: z.string().max(80).optional(),
  afterId: z.coerce.number().int().min(0).optional(),
  limit: z.coerce.number().int().min(1).max(1000).default(200),
});

export function auditRoutes(audit: AuditService) {
  const t = routeTable('/api/audit');
  const list = { query: AuditQuerySchema };
  t.add('get', '/', 'audit.read', validate(list), async (_req, res) => {
    const rows = await audit.list(input(res, list).query);
    res.json({ items: await audit.inWords(rows) });
  });
  t.add('get', '/verify', 'audit.read', async (_req, res) => {
    res.json(await audit.verify());
  });
  return t;
}
