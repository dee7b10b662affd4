import { randomInt } from 'node:crypto';
import type { Db } from '../db/client';
import { siteRepository, userRepository, type UserRow } from '../db/repositories/user.repository';
import { badRequest, conflict, notFound } from '../errors';
import type { InviteUserBody, UpdateUserBody, User } from '../../shared/schemas/users';
import type { Actor, AuditService } from './audit.service';
import { newPasswordProblem, type AuthService } from './auth.service';

export function toUser(r: UserRow, now = Date.now()): User {
  const lockedUntil = (d: Date | null) => (d && d.getTime() > now ? d.toISOString() : null);
  return {
    id: r.id,
    email: r.email,
    name: r.name,
    role: r.role,
    active: r.active,
    createdAt: r.createdAt.toISOString(),
    mustChangePassword: r.mustChangePassword,
    signInLockedUntil: lockedUntil(r.signInLockedUntil),
    signingLockedUntil: lockedUntil(r.signingLockedUntil),
  };
}

/** Letters and digits that cannot be mistaken for one another when read out or copied by hand. */
const ONE_TIME_ALPHABET = 'abcdefghjkmnpqrstuvwxyz23456789';

/** A one-time initial password: four groups of four (about 79 bits from a CSPRNG). */
export function oneTimePassword(): string {
  const group = () => Array.from({ length: 4 }, () => ONE_TIME_ALPHABET[randomInt(ONE_TIME_ALPHABET.length)]).join('');
  return [group(), group(), group(), group()].join('-');
}

export function createUserService(db: Db, audit: AuditService, auth: Pick<AuthService, 'endSessions' | 'hashPassword'>) {
  const users = userRepository(db);
  const sites = siteRepository(db);
  async function existing(id: string): Promise<UserRow> {
    const row = await users.findById(id);
    if (!row) throw notFound('No such user');
    return row;
  }
  return {
    async list(): Promise<User[]> {
      return (await users.list()).map((r) => toUser(r));
    },
    /** True once a site exists (the demo seed or a real set-up has run). */
    async siteExists(): Promise<boolean> {
      return !!(await sites.get());
    },
    /** Invites a user with an initial password, given out of band; they must change it at first sign-in. */
    async invite(actor: Actor, body: InviteUserBody): Promise<User> {
      const problem = newPasswordProblem(body.password, body.email);
      if (problem) throw badRequest('Choose a less common password', { password: [problem] });
      if (await users.findByEmail(body.email)) throw conflict('That email is already registered', { email: ['Already registered'] });
      const row = await users.create({ email: body.email, name: body.name, role: body.role, passwordHash: await auth.hashPassword(body.password), mustChangePassword: true });
      await audit.record(actor, 'user.invited', 'user', row.id, undefined, toUser(row));
      return toUser(row);
    },
    async update(actor: Actor, id: string, body: UpdateUserBody): Promise<User> {
      const before = await existing(id);
      if (id === actor.id && (body.active === false || (body.role && body.role !== before.role))) {
        throw badRequest('You cannot change your own role or deactivate yourself', { role: ['Ask another admin'] });
      }
      const row = await users.update(id, body);
      if (body.active === false) await auth.endSessions(id, { reason: 'deactivated' });
      else if (body.role && body.role !== before.role) await auth.endSessions(id, { reason: 'role-changed' });
      await audit.record(actor, 'user.changed', 'user', id, toUser(before), toUser(row!));
      return toUser(row!);
    },
    /**
     * Admin reset: a new one-time password (returned once, never stored in clear or audited), a
     * change required at the next sign-in, every session of the user ended and any lock lifted.
     */
    async resetPassword(actor: Actor, id: string): Promise<{ user: User; password: string }> {
      const before = await existing(id);
      if (id === actor.id) throw badRequest('Change your own password on the password page instead', { id: ['You cannot reset your own password'] });
      const password = oneTimePassword();
      const row = await users.update(id, {
        passwordHash: await auth.hashPassword(password),
        mustChangePassword: true,
        failedSignIns: 0,
        signInLockedUntil: null,
        signatureFailures: 0,
        signingLockedUntil: null,
      });
      const ended = await auth.endSessions(id, { reason: 'revoked' });
      await audit.record(actor, 'user.password-reset', 'user', id, toUser(before), { ...toUser(row!), sessionsEnded: ended.length });
      return { user: toUser(row!), password };
    },
    /** Lifts the sign-in and password re-entry locks of a user (audited). */
    async unlock(actor: Actor, id: string): Promise<User> {
      const before = await existing(id);
      const row = await users.update(id, { failedSignIns: 0, signInLockedUntil: null, signatureFailures: 0, signingLockedUntil: null });
      await audit.record(actor, 'user.unlocked', 'user', id, toUser(before), toUser(row!));
      return toUser(row!);
    },
  };
}
export type UserService = ReturnType<typeof createUserService>;
