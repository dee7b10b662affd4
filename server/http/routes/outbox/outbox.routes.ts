import { z } from 'zod';
import { IdParamSchema } from '../../../../shared/schemas/users';
import type { MailService } from '../../../services/mail.service';
import { input, validate } from '../../middleware/validate';
import { routeTable } from '../../route-table';

/** The Outbox (admin): messages the local fake SMTP server received. */
export function outboxRoutes(mail: MailService) {
  const t = routeTable('/api/outbox');
  const list = { query: z.object({ limit: z.coerce.number().int().min(1).max(1000).default(200) }) };
  t.add('get', '/', 'mail.outbox', validate(list), async (_req, res) => {
    res.json({ items: await mail.list(input(res, list).query.limit) });
  });
  const one = { params: IdParamSchema };
  t.add('get', '/:id', 'mail.outbox', validate(one), async (_req, res) => {
    res.json(await mail.get(input(res, one).params.id));
  });
  return t;
}
