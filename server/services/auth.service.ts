import { randomUUID } from 'node:crypto';
import bcrypt from 'bcryptjs';
import { SignJWT, jwtVerify, errors as joseErrors } from 'jose';
import type { Db } from '../db/client';
import { sessionRepository, siteRepository, userRepository, type UserRow } from '../db/repositories/user.repository';
import { parseSiteSettings } from '../../shared/schemas/settings';
import { DEFAULT_TIME_ZONE } from '../../shared/format/dates';
import { AppError, badRequest, locked, unauthenticated } from '../errors';
import type { Role } from '../../shared/schemas/auth';
import type { AuditService } from './audit.service';
import { createSessionEvents, type SessionEndReason, type SessionEvents } from './session-events';
import { MIN_PASSWORD_SCORE, passwordStrength } from './password-strength';

/**
 * bcrypt cost factor by default: 2^11 rounds. The OWASP Password Storage Cheat Sheet asks for a
 * work factor of at least 10 ({@link MIN_PRODUCTION_HASH_COST}); PASSWORD_HASH_COST may raise it,
 * and lower it (down to bcrypt's own minimum, 4) only outside production, for test servers.
 */
export const DEFAULT_HASH_COST = 11;
export const MIN_PRODUCTION_HASH_COST = 10;
export const SESSION_TTL_SECONDS = 12 * 3600;
export const TOKEN_ISSUER = 'stillpoint';
export const TOKEN_AUDIENCE = 'stillpoint-web';
/** Only this algorithm is accepted when verifying; `alg: none` and others are refused. */
const ALGORITHMS = ['HS256'];

/**
 * Account throttle (NIST SP 800-63B §5.2.2 asks verifiers to limit failed attempts per account):
 * after this many failed sign-ins in a row the account is locked, first for
 * {@link SIGN_IN_LOCK_MS}, then twice as long after each further failure once a lock has run out,
 * up to {@link SIGN_IN_LOCK_MAX_MS}. An admin can lift the lock; a successful sign-in resets it.
 */
export const SIGN_IN_FAILURES_BEFORE_LOCK = 5;
export const SIGN_IN_LOCK_MS = 15 * 60_000;
export const SIGN_IN_LOCK_MAX_MS = 24 * 3600_000;
/**
 * Re-entered passwords (electronic signatures, password change): this many wrong in a row lock
 * re-entry for {@link SIGNING_LOCK_MS}; while locked an attempt is refused without checking it.
 */
export const SIGNATURE_FAILURES_BEFORE_LOCK = 5;
export const SIGNING_LOCK_MS = 15 * 60_000;
/** How long a verified session is taken from memory before the database is asked again, ms. */
export const SESSION_CACHE_MS = 5_000;
const SESSION_CACHE_MAX = 10_000;

export interface SessionUser {
  id: string;
  email: string;
  name: string;
  role: Role;
  jti: string;
  /** When the session ends by itself, ms since the epoch (set by `verify`). */
  expiresAtMs?: number;
  /** The user must choose a new password before anything else (after an invite or a reset). */
  mustChangePassword?: boolean;
}

export interface AuthOptions {
  /** Clock, ms since the epoch (tests inject one). */
  now?: () => number;
  /** bcrypt cost factor of new password hashes (PASSWORD_HASH_COST; {@link DEFAULT_HASH_COST} unset). */
  hashCost?: number;
  sessionCacheMs?: number;
}

// A hash to compare against when the email is unknown, so timing does not reveal accounts. Made at
// the first sign-in that needs it, not at import (every process that imports this would pay a hash).
// One per cost factor, so the unknown-email path costs what a real account's check costs.
const dummyHashes = new Map<number, Promise<string>>();
function dummy(cost: number): Promise<string> {
  let h = dummyHashes.get(cost);
  if (!h) dummyHashes.set(cost, (h = bcrypt.hash('not-a-real-password-0', cost)));
  return h;
}

/** A bcrypt hash of `password` at `cost` (a stored hash carries its cost, so any cost verifies). */
export function hashPassword(password: string, cost: number = DEFAULT_HASH_COST): Promise<string> {
  return bcrypt.hash(password, cost);
}

/**
 * Why a new password is refused, or undefined: an estimated strength below
 * {@link MIN_PASSWORD_SCORE} by `@zxcvbn-ts/core` (password-strength.ts), with the account's email
 * name and the product's words as user inputs, or the email name inside the password.
 */
export function newPasswordProblem(password: string, email: string): string | undefined {
  const name = email.split('@')[0]!.toLowerCase();
  if (name.length >= 3 && password.toLowerCase().includes(name)) return 'This password contains the name part of the email address; choose one that does not';
  const s = passwordStrength(password, email);
  if (s.score >= MIN_PASSWORD_SCORE) return undefined;
  const why = s.warning ?? 'It would be guessed too quickly.';
  const how = s.suggestions[0] ?? 'Use a longer password of several unrelated words.';
  return `This password is too easy to guess. ${why} ${how}`;
}

/** Lock length after `failures` failed sign-ins in a row (0 below the threshold). */
export function signInLockMs(failures: number): number {
  if (failures < SIGN_IN_FAILURES_BEFORE_LOCK) return 0;
  return Math.min(SIGN_IN_LOCK_MAX_MS, SIGN_IN_LOCK_MS * 2 ** Math.min(20, failures - SIGN_IN_FAILURES_BEFORE_LOCK));
}

const hhmm = (ms: number) => new Date(ms).toISOString().slice(11, 16);

/** A 429 for a locked account, carrying the seconds to wait (sent as Retry-After). */
export class AccountLockedError extends AppError {
  constructor(
    message: string,
    readonly retryAfterSeconds: number,
  ) {
    super(429, 'rate_limited', message);
  }
}

export function createAuthService(db: Db, secret: Uint8Array, audit: AuditService, opts: AuthOptions = {}, sessionEvents: SessionEvents = createSessionEvents()) {
  const users = userRepository(db);
  const sessions = sessionRepository(db);
  const sites = siteRepository(db);
  const now = opts.now ?? Date.now;
  const cacheMs = opts.sessionCacheMs ?? SESSION_CACHE_MS;
  const hashCost = opts.hashCost ?? DEFAULT_HASH_COST;
  /**
   * Verified sessions by their token, so a burst of requests costs one signature check and one
   * database look-up: the same token string within {@link SESSION_CACHE_MS} of its verification is
   * taken from here (an HS256 check through WebCrypto cost about 1.4 ms of the main thread per
   * request, measured 2026-12-03).
   */
  const cache = new Map<string, { user: SessionUser; until: number }>();

  function forget(userId: string, exceptJti?: string) {
    for (const [token, e] of cache) if (e.user.id === userId && e.user.jti !== exceptJti) cache.delete(token);
  }

  /** Drops the cached verification of session `jti`. */
  function forgetSession(jti: string) {
    for (const [token, e] of cache) if (e.user.jti === jti) cache.delete(token);
  }

  async function issue(user: UserRow): Promise<{ token: string; expiresAt: Date; jti: string }> {
    const jti = randomUUID();
    const expiresAt = new Date(now() + SESSION_TTL_SECONDS * 1000);
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
    return { token, expiresAt, jti };
  }

  /**
   * Checks a re-entered password against the per-user limit: refused unchecked while re-entry is
   * locked; the fifth wrong one in a row locks it (audited); a right one resets the count.
   */
  async function checkReentered(userId: string, password: string, what: string): Promise<boolean> {
    const user = await users.findById(userId);
    if (!user || !user.active) return false;
    const until = user.signingLockedUntil?.getTime() ?? 0;
    if (until > now()) {
      throw locked(`Password re-entry is locked after ${SIGNATURE_FAILURES_BEFORE_LOCK} wrong passwords in a row; try again after ${hhmm(until)} UTC or ask an admin to unlock it`);
    }
    if (await bcrypt.compare(password, user.passwordHash)) {
      if (user.signatureFailures || user.signingLockedUntil) await users.update(user.id, { signatureFailures: 0, signingLockedUntil: null });
      return true;
    }
    const n = await users.addSignatureFailure(user.id);
    if (n >= SIGNATURE_FAILURES_BEFORE_LOCK) {
      const lockedUntil = new Date(now() + SIGNING_LOCK_MS);
      await users.update(user.id, { signatureFailures: 0, signingLockedUntil: lockedUntil });
      await audit.record({ id: user.id, email: user.email }, 'auth.reentry-locked', 'user', user.id, undefined, { failures: n, lockedUntil: lockedUntil.toISOString(), during: what });
    }
    return false;
  }

  const service = {
    /** A hash of a new password at this service's cost factor (invites, resets). */
    hashPassword: (password: string) => hashPassword(password, hashCost),
    /**
     * Checks the password; on success opens a session. A wrong password is a 401 with one message
     * for any failure; a locked account is a 429 (checked before the password, which is not tried).
     */
    async login(email: string, password: string): Promise<{ token: string; expiresAt: Date; user: UserRow }> {
      const user = await users.findByEmail(email);
      const until = user?.signInLockedUntil?.getTime() ?? 0;
      if (user && until > now()) {
        await audit.record({ id: user.id, email: user.email }, 'auth.sign-in-failed', 'user', user.id, undefined, { email, reason: 'account locked' });
        throw new AccountLockedError(`Too many failed sign-ins for this account; try again after ${hhmm(until)} UTC or ask an admin to unlock it`, Math.ceil((until - now()) / 1000));
      }
      const ok = await bcrypt.compare(password, user?.passwordHash ?? (await dummy(hashCost)));
      if (!user || !ok || !user.active) {
        await audit.record(user ? { id: user.id, email: user.email } : null, 'auth.sign-in-failed', 'user', user?.id ?? null, undefined, { email });
        if (user && !ok) {
          const n = await users.addSignInFailure(user.id);
          const lockMs = signInLockMs(n);
          if (lockMs) {
            const lockedUntil = new Date(now() + lockMs);
            await users.update(user.id, { signInLockedUntil: lockedUntil });
            await audit.record(null, 'auth.account-locked', 'user', user.id, undefined, { email: user.email, failures: n, lockedUntil: lockedUntil.toISOString() });
          }
        }
        throw unauthenticated('Email or password is not right');
      }
      if (user.failedSignIns || user.signInLockedUntil) await users.update(user.id, { failedSignIns: 0, signInLockedUntil: null });
      const issued = await issue(user);
      await audit.record({ id: user.id, email: user.email }, 'auth.signed-in', 'user', user.id);
      return { token: issued.token, expiresAt: issued.expiresAt, user };
    },

    /**
     * Verifies signature, algorithm, issuer, audience, expiry, and that the jti names an open
     * session of the token's own user. A verified session is kept in memory for
     * {@link SESSION_CACHE_MS}; ending a session removes it at once.
     */
    async verify(token: string): Promise<SessionUser> {
      const hit = cache.get(token);
      if (hit) {
        if (hit.until > now()) return hit.user;
        cache.delete(token);
      }
      let payload;
      try {
        ({ payload } = await jwtVerify(token, secret, { algorithms: ALGORITHMS, issuer: TOKEN_ISSUER, audience: TOKEN_AUDIENCE, currentDate: new Date(now()) }));
      } catch (e) {
        if (e instanceof joseErrors.JWTExpired) throw unauthenticated('Your session has expired; sign in again');
        throw unauthenticated('Sign in first');
      }
      if (!payload.jti || !payload.sub) throw unauthenticated();
      const session = await sessions.findActive(payload.jti, payload.sub);
      if (!session || session.expiresAt.getTime() < now()) throw unauthenticated('Your session has ended; sign in again');
      const user = await users.findById(payload.sub);
      if (!user || !user.active) throw unauthenticated('This account is not active');
      const expiresAtMs = Math.min(session.expiresAt.getTime(), payload.exp === undefined ? Infinity : payload.exp * 1000);
      const out: SessionUser = { id: user.id, email: user.email, name: user.name, role: user.role, jti: payload.jti, mustChangePassword: user.mustChangePassword, expiresAtMs };
      if (cacheMs > 0) {
        if (cache.size >= SESSION_CACHE_MAX) for (const [k, e] of cache) if (e.until <= now() || cache.size >= SESSION_CACHE_MAX) cache.delete(k);
        cache.set(token, { user: out, until: Math.min(now() + cacheMs, expiresAtMs) });
      }
      return out;
    },

    /**
     * Checks a password again for an electronic signature (21 CFR Part 11 §11.200), within the
     * per-user limit: throws 423 `locked` while re-entry is locked, without checking the password.
     */
    async checkPassword(userId: string, password: string): Promise<boolean> {
      return checkReentered(userId, password, 'signature');
    },

    /**
     * Ends every open session of a user except `except` (a jti): revoked in the database and
     * dropped from the session cache. The one place sessions are ended in bulk, so whatever else
     * must follow (closing the user's WebSockets) hooks in here.
     */
    async endSessions(userId: string, opts: { except?: string; reason?: SessionEndReason } = {}): Promise<string[]> {
      const ended = await sessions.revokeAllFor(userId, opts.except);
      forget(userId, opts.except);
      for (const jti of ended) forgetSession(jti);
      sessionEvents.ended({ userId, reason: opts.reason ?? 'revoked', ...(opts.except === undefined ? {} : { except: opts.except }) });
      return ended;
    },

    /**
     * Changes the signed-in user's own password: the current one is required (and counts toward
     * the re-entry limit); the new one must differ and pass the strength check. Every other
     * session of the user ends; this one stays.
     */
    async changePassword(user: SessionUser, current: string, next: string): Promise<void> {
      if (!(await checkReentered(user.id, current, 'password change'))) {
        await audit.record(user, 'auth.password-change-failed', 'user', user.id, undefined, { reason: 'current password not accepted' });
        throw new AppError(400, 'validation_failed', 'The current password is not right; nothing was changed', { current: ['The current password is not right'] });
      }
      if (current === next) throw badRequest('Choose a new password', { next: ['The new password must differ from the current one'] });
      const problem = newPasswordProblem(next, user.email);
      if (problem) throw badRequest('Choose a less common password', { next: [problem] });
      await users.update(user.id, { passwordHash: await hashPassword(next, hashCost), mustChangePassword: false });
      const ended = await service.endSessions(user.id, { except: user.jti, reason: 'password-changed' });
      forgetSession(user.jti);
      await audit.record(user, 'auth.password-changed', 'user', user.id, undefined, { otherSessionsEnded: ended.length });
    },

    async logout(user: SessionUser): Promise<void> {
      await sessions.revoke(user.jti);
      forgetSession(user.jti);
      sessionEvents.ended({ userId: user.id, jti: user.jti, reason: 'signed-out' });
      await audit.record({ id: user.id, email: user.email }, 'auth.signed-out', 'user', user.id);
    },

    async me(user: SessionUser) {
      const site = await sites.get();
      const timeZone = parseSiteSettings(site?.settings).timeZone ?? DEFAULT_TIME_ZONE;
      return { id: user.id, email: user.email, name: user.name, role: user.role, siteName: site?.name ?? 'Stillpoint', timeZone, mustChangePassword: !!user.mustChangePassword };
    },
  };
  return service;
}
export type AuthService = ReturnType<typeof createAuthService>;
