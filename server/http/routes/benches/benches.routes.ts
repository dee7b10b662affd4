import { BenchIdParamSchema, RegisterBenchBodySchema } from '../../../../shared/schemas/benches';
import type { BenchRegistry } from '../../../services/bench-registry.service';
import { currentUser } from '../../middleware/auth';
import { input, validate } from '../../middleware/validate';
import { routeTable } from '../../route-table';

/** Benches other than this server's own: list (all signed in); register and revoke (lead, admin). */
export function benchesRoutes(registry: BenchRegistry) {
  const t = routeTable('/api/benches');
  t.add('get', '/', 'benches.read', async (_req, res) => {
    res.json(await registry.list(currentUser(res)));
  });
  const register = { body: RegisterBenchBodySchema };
  t.add('post', '/', 'benches.manage', validate(register), async (_req, res) => {
    res.status(201).json(await registry.register(currentUser(res), input(res, register).body));
  });
  const revoke = { params: BenchIdParamSchema };
  t.add('post', '/:id/revoke', 'benches.manage', validate(revoke), async (_req, res) => {
    res.json(await registry.revoke(currentUser(res), input(res, revoke).params.id));
  });
  return t;
}
