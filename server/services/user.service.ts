import type { Db } from '../db/client';
import { userRepository, type UserRow } from '../db/repositories/user.repository';
import { badRequest, conflict, notFound } from '../errors';
import type { InviteUserBody, UpdateUserBody, User } from '../../shared/schemas/users';
import type { Actor, AuditService } from './audit.service';
import { hashPassword, type AuthService } from './auth.service';
import { isCommonPassword } from './common-passwords';

export function toUser(r: UserRow): User {
  return { id: r.id, email: r.email, name: r.name, role: r.role, active: r.active, createdAt: r.createdAt.toISOString() };
}

export function createUserService(db: Db, audit: AuditService, auth: Pick<AuthService, 'endSessions'>) {
  const users = userRepository(db);
  return {
    async list(): Promise<User[]> {
      return (await users.list()).map(toUser);
    },
    async invite(actor: Actor, body: InviteUserBody): Promise<User> {
      if (isCommonPassword(body.password) || body.password.toLowerCase().includes(body.email.split('@')[0]!)) {
        throw badRequest('Choose a less common password', { password: ['This password is too common or contains the email name'] });
      }
      if (await users.findByEmail(body.email)) throw conflict('That email is already registered', { email: ['Already registered'] });
      const row = await users.create({ email: body.email, name: body.name, role: body.role, passwordHash: await hashPassword(body.password) });
      await audit.record(actor, 'user.invited', 'user', row.id, undefined, toUser(row));
      return toUser(row);
    },
    async update(actor: Actor, id: string, body: UpdateUserBody): Promise<User> {
      const before = await users.findById(id);
      if (!before) throw notFound('No such user');
      if (id === actor.id && (body.active === false || (body.role && body.role !== before.role))) {
        throw badRequest('You cannot change your own role or deactivate yourself', { role: ['Ask another admin'] });
      }
      const row = await users.update(id, body);
      if (body.active === false) await auth.endSessions(id, { reason: 'deactivated' });
      else if (body.role && body.role !== before.role) await auth.endSessions(id, { reason: 'role-changed' });
      await audit.record(actor, 'user.changed', 'user', id, toUser(before), toUser(row!));
      return toUser(row!);
    },
  };
}
export type UserService = ReturnType<typeof createUserService>;
