/**
 * In-process notice that sessions have ended (sign-out, deactivation, role change, revocation such
 * as a password change ending the other sessions). The auth and user services announce it after
 * the database says so; the WebSocket server closes the sockets that ride on those sessions. One
 * emitter per process, made at the composition root and handed to both sides.
 */
import { EventEmitter } from 'node:events';

/** Why sessions ended; the socket's close reason says it in words. */
export type SessionEndReason = 'signed-out' | 'deactivated' | 'role-changed' | 'revoked' | 'password-changed' | 'expired';

/** Sessions of one user that have ended: one session (`jti`), or all of them but `except`. */
export interface SessionsEnded {
  userId: string;
  reason: SessionEndReason;
  /** Only this session ended. */
  jti?: string;
  /** Every session of the user ended except this one (the one that changed its password). */
  except?: string;
}

/** Does a session (user and jti) belong to an ending? */
export function endsSession(e: SessionsEnded, userId: string, jti: string): boolean {
  if (e.userId !== userId) return false;
  if (e.jti !== undefined) return e.jti === jti;
  return e.except === undefined || e.except !== jti;
}

export function createSessionEvents() {
  const emitter = new EventEmitter<{ 'sessions.ended': [SessionsEnded] }>();
  // One listener per WebSocket server (tests boot several in a process).
  emitter.setMaxListeners(100);
  return {
    /** Announces ended sessions; listeners run synchronously. */
    ended(e: SessionsEnded): void {
      emitter.emit('sessions.ended', e);
    },
    /** Listens for ended sessions; returns the function that stops listening. */
    onEnded(listener: (e: SessionsEnded) => void): () => void {
      emitter.on('sessions.ended', listener);
      return () => emitter.off('sessions.ended', listener);
    },
  };
}
export type SessionEvents = ReturnType<typeof createSessionEvents>;
