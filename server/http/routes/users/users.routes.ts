import { EmptyBodySchema, IdParamSchema, InviteUserBodySchema, UpdateUserBodySchema } from '../../../../shared/schemas/users';
import type { UserService } from '../../../services/user.service';
import { currentUser } from '../../middleware/auth';
import { input, validate } from '../../middleware/validate';
import { routeTable } from '../../route-table';

export function userRoutes(users: UserService) {
  const t = routeTable('/api/users');
  t.add('get', '/', 'users.manage', async (_req, res) => {
    res.json({ items: await users.list() });
  });
  const invite = { body: InviteUserBodySchema };
  t.add('post', '/', 'users.manage', validate(invite), async (_req, res) => {
    res.status(201).json(await users.invite(currentUser(res), input(res, invite).body));
  });
  const update = { params: IdParamSchema, body: UpdateUserBodySchema };
  t.add('patch', '/:id', 'users.manage', validate(update), async (_req, res) => {
    const { params, body } = input(res, update);
    res.json(await users.update(currentUser(res), params.id, body));
  });
  const action = { params: IdParamSchema, body: EmptyBodySchema };
  t.add('post', '/:id/reset-password', 'users.manage', validate(action), async (_req, res) => {
    // The one-time password is in this reply only; it must not be cached anywhere on the way.
    res.set('Cache-Control', 'no-store');
    res.json(await users.resetPassword(currentUser(res), input(res, action).params.id));
  });
  t.add('post', '/:id/unlock', 'users.manage', validate(action), async (_req, res) => {
    res.json(await users.unlock(currentUser(res), input(res, action).params.id));
  });
  return t;
}
