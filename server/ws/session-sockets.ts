/**
 * Sockets follow their session: the open sockets of each account, at most `maxPerUser` of them,
 * each ended (close code 4401 with a reason the client shows) when its session ends — sign-out,
 * deactivation, role change, revocation (session-events.ts) or its own expiry time.
 */
import { STREAM_CLOSE } from '../../shared/schemas/stream';
import type { SessionUser } from '../services/auth.service';
import { endsSession, type SessionEndReason, type SessionEvents, type SessionsEnded } from '../services/session-events';

/** Close reasons the client shows (at most 123 bytes, RFC 6455 §5.5). */
export const SESSION_CLOSE_REASONS: Record<SessionEndReason, string> = {
  'signed-out': 'Signed out',
  deactivated: 'Signed out: this account was deactivated',
  'role-changed': 'Signed out: your role changed; sign in again',
  revoked: 'Signed out: this session was ended',
  'password-changed': 'Signed out: the password was changed; sign in again',
  expired: 'Signed out: the session expired; sign in again',
};

/** A socket as this registry sees it. */
export interface SessionSocket {
  user: SessionUser;
  /** Closes the socket with this code and reason (the registry has already let it go). */
  end(code: number, reason: string): void;
}

/** Longest delay setTimeout takes (about 24.8 days). */
const MAX_TIMER_MS = 2 ** 31 - 1;
/** Endings kept for upgrades that were being authenticated when they came, ms. */
const RECENT_MS = 60_000;

export function createSessionSockets<S extends SessionSocket>(o: { sessionEvents: SessionEvents; maxPerUser: number }) {
  const byUser = new Map<string, Set<S>>();
  const expiry = new Map<S, NodeJS.Timeout>();
  let recent: { e: SessionsEnded; at: number }[] = [];
  const stats = { sessionClosed: 0, tooMany: 0 };

  function leave(s: S): void {
    const mine = byUser.get(s.user.id);
    mine?.delete(s);
    if (mine && !mine.size) byUser.delete(s.user.id);
    clearTimeout(expiry.get(s));
    expiry.delete(s);
  }

  function endSession(s: S, reason: SessionEndReason): void {
    stats.sessionClosed++;
    leave(s);
    s.end(STREAM_CLOSE.sessionEnded, SESSION_CLOSE_REASONS[reason]);
  }

  const stop = o.sessionEvents.onEnded((e) => {
    const now = performance.now();
    recent = recent.filter((r) => now - r.at < RECENT_MS);
    recent.push({ e, at: now });
    for (const s of [...(byUser.get(e.userId) ?? [])]) if (endsSession(e, s.user.id, s.user.jti)) endSession(s, e.reason);
  });

  return {
    /**
     * Takes a newly opened socket whose upgrade was authenticated from `askedAt` (performance.now())
     * on; undefined when it may stay, else the close code and reason it gets (too many sockets for
     * the account, or its session ended meanwhile) — it is then not kept.
     */
    admit(s: S, askedAt: number): { code: number; reason: string } | undefined {
      const mine = byUser.get(s.user.id) ?? new Set<S>();
      if (mine.size >= o.maxPerUser) {
        stats.tooMany++;
        return { code: STREAM_CLOSE.tooManyConnections, reason: `Too many live connections for this account (at most ${o.maxPerUser}); close another tab` };
      }
      const meanwhile = recent.find((r) => r.at >= askedAt && endsSession(r.e, s.user.id, s.user.jti));
      const left = s.user.expiresAtMs === undefined ? Infinity : s.user.expiresAtMs - Date.now();
      if (meanwhile || left <= 0) {
        stats.sessionClosed++;
        return { code: STREAM_CLOSE.sessionEnded, reason: SESSION_CLOSE_REASONS[meanwhile ? meanwhile.e.reason : 'expired'] };
      }
      byUser.set(s.user.id, mine.add(s));
      if (left !== Infinity) {
        const t = setTimeout(() => endSession(s, 'expired'), Math.min(left, MAX_TIMER_MS));
        t.unref();
        expiry.set(s, t);
      }
      return undefined;
    },
    /** Lets a socket go (it closed). */
    leave,
    stats: () => ({ ...stats, users: byUser.size }),
    close(): void {
      stop();
      for (const t of expiry.values()) clearTimeout(t);
      expiry.clear();
      byUser.clear();
    },
  };
}
