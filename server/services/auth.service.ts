import { randomUUID } from 'node:crypto';
import bcrypt from 'bcryptjs';
import { SignJWT, jwtVerify, errors as joseErrors } from 'jose';
import type { Db } from '../db/client';
import { sessionRepository, siteRepository, userRepository, type UserRow } from '../db/repositories/user.repository';
import { unauthenticated } from '../errors';
import type { Role } from '../../shared/schemas/auth';
import type { AuditService } from './audit.service';
import { createSessionEvents, type SessionEndReason, type SessionEvents } from './session-events';

/** bcrypt cost factor; 2^11 rounds (OWASP password storage guidance asks for at least 10). */
export const BCRYPT_COST = 11;
export const SESSION_TTL_SECONDS = 12 * 3600;
export const TOKEN_ISSUER = 'stillpoint';
export const TOKEN_AUDIENCE = 'stillpoint-web';
/** Only this algorithm is accepted when verifying; `alg: none` and others are refused. */
const ALGORITHMS = ['HS256'];

export interface SessionUser {
  id: string;
  email: string;
  name: string;
  role: Role;
  jti: string;
  /** When the session ends by itself, ms since the epoch (set by `verify`). */
  expiresAtMs?: number;
}

// A hash to compare against when the email is unknown, so timing does not reveal accounts.
const DUMMY_HASH = bcrypt.hashSync('not-a-real-password-0', BCRYPT_COST);

export function hashPassword(password: string): Promise<string> {
  return bcrypt.hash(password, BCRYPT_COST);
}

export function createAuthService(db: Db, secret: Uint8Array, audit: AuditService, sessionEvents: SessionEvents = createSessionEvents()) {
  const users = userRepository(db);
  const sessions = sessionRepository(db);
  const sites = siteRepository(db);

  async function issue(user: UserRow): Promise<{ token: string; expiresAt: Date }> {
    const jti = randomUUID();
    const expiresAt = new Date(Date.now() + SESSION_TTL_SECONDS * 1000);
    await sessions.create({ jti, userId: user.id, expiresAt });
    const token = await new SignJWT({ role: user.role })
      .setProtectedHeader({ alg: 'HS256', typ: 'JWT' })
      .setSubject(user.id)
      .setJti(jti)
      .setIssuer(TOKEN_ISSUER)
      .setAudience(TOKEN_AUDIENCE)
      .setIssuedAt()
      .setExpirationTime(Math.floor(expiresAt.getTime() / 1000))
      .sign(secret);
    return { token, expiresAt };
  }

  return {
    /** Checks the password; on success opens a session. Throws 401 with one message for any failure. */
    async login(email: string, password: string): Promise<{ token: string; expiresAt: Date; user: UserRow }> {
      const user = await users.findByEmail(email);
      const ok = await bcrypt.compare(password, user?.passwordHash ?? DUMMY_HASH);
      if (!user || !ok || !user.active) {
        await audit.record(user ? { id: user.id, email: user.email } : null, 'auth.sign-in-failed', 'user', user?.id ?? null, undefined, { email });
        throw unauthenticated('Email or password is not right');
      }
      const issued = await issue(user);
      await audit.record({ id: user.id, email: user.email }, 'auth.signed-in', 'user', user.id);
      return { ...issued, user };
    },

    /** Verifies signature, algorithm, issuer, audience, expiry, and that the jti is not revoked. */
    async verify(token: string): Promise<SessionUser> {
      let payload;
      try {
        ({ payload } = await jwtVerify(token, secret, { algorithms: ALGORITHMS, issuer: TOKEN_ISSUER, audience: TOKEN_AUDIENCE }));
      } catch (e) {
        if (e instanceof joseErrors.JWTExpired) throw unauthenticated('Your session has expired; sign in again');
        throw unauthenticated('Sign in first');
      }
      if (!payload.jti || !payload.sub) throw unauthenticated();
      const session = await sessions.findActive(payload.jti);
      if (!session || session.expiresAt.getTime() < Date.now()) throw unauthenticated('Your session has ended; sign in again');
      const user = await users.findById(payload.sub);
      if (!user || !user.active) throw unauthenticated('This account is not active');
      const expiresAtMs = Math.min(session.expiresAt.getTime(), payload.exp === undefined ? Infinity : payload.exp * 1000);
      return { id: user.id, email: user.email, name: user.name, role: user.role, jti: payload.jti, expiresAtMs };
    },

    /** Checks a password again for an electronic signature (21 CFR Part 11 §11.200). */
    async checkPassword(userId: string, password: string): Promise<boolean> {
      const user = await users.findById(userId);
      return !!user && user.active && (await bcrypt.compare(password, user.passwordHash));
    },

    async logout(user: SessionUser): Promise<void> {
      await sessions.revoke(user.jti);
      sessionEvents.ended({ userId: user.id, jti: user.jti, reason: 'signed-out' });
      await audit.record({ id: user.id, email: user.email }, 'auth.signed-out', 'user', user.id);
    },

    /**
     * Ends every session of a user (all but `except`, a jti, when given: a password change keeps
     * the session that made it), and closes the sockets that ride on them.
     */
    async endSessions(userId: string, o: { except?: string; reason: SessionEndReason }): Promise<void> {
      await sessions.revokeAllFor(userId, o.except);
      sessionEvents.ended({ userId, reason: o.reason, ...(o.except === undefined ? {} : { except: o.except }) });
    },

    async me(user: SessionUser) {
      const site = await sites.get();
      return { id: user.id, email: user.email, name: user.name, role: user.role, siteName: site?.name ?? 'Stillpoint' };
    },
  };
}
export type AuthService = ReturnType<typeof createAuthService>;
