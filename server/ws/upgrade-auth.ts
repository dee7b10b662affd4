/**
 * Who is opening `/ws`: a signed-in user (the session cookie, checked like an HTTP request's) or a
 * registered bench agent (`Authorization: Bearer <agent token>`). Kept apart from the stream server
 * so that the identities a socket may carry are decided in one place.
 */
import type http from 'node:http';
import { allows } from '../http/policy';
import { SESSION_COOKIE } from '../http/middleware/auth';
import type { AuthService, SessionUser } from '../services/auth.service';
import type { BenchRegistry } from '../services/bench-registry.service';
import type { ForwardPrincipal } from '../services/forward.service';
import { parseCookie } from 'cookie';

export { SESSION_COOKIE };

/** Who is on the other end of a socket: a user (with the session token, checked again on every forwarded batch) or an agent. */
export type StreamPrincipal = ForwardPrincipal;

/** Outcome of {@link authenticateUpgrade}. `user` is null for an agent. */
export type UpgradeAuth = { ok: true; user: SessionUser | null; principal: StreamPrincipal } | { ok: false; status: 401 | 403; message: string };


/**
 * Authenticates an upgrade request. A Bearer token must be an active agent's (a revoked or unknown
 * token is a 401, never a fall-back to the cookie); otherwise the session cookie decides.
 */
export async function authenticateUpgrade(req: http.IncomingMessage, auth: AuthService, registry?: BenchRegistry): Promise<UpgradeAuth> {
  const authz = req.headers.authorization;
  if (authz !== undefined) {
    const m = /^Bearer\s+(\S+)$/i.exec(authz.trim());
    const bench = m && registry ? registry.agentOfToken(m[1]!) : undefined;
    if (!bench) return { ok: false, status: 401, message: 'Unknown or revoked bench token' };
    return { ok: true, user: null, principal: { kind: 'agent', benchId: bench.id } };
  }
  const token = parseCookie(req.headers.cookie ?? '')[SESSION_COOKIE];
  let user: SessionUser | undefined;
  if (token) {
    try {
      user = await auth.verify(token);
    } catch {
      user = undefined;
    }
  }
  if (!user || !token) return { ok: false, status: 401, message: 'Sign in first' };
  if (!allows('stream.subscribe', user.role)) return { ok: false, status: 403, message: 'Your role does not allow this' };
  // Like every HTTP route but the password change: a user who must choose a new password gets nothing else first.
  if (user.mustChangePassword) return { ok: false, status: 403, message: 'Choose a new password first' };
  return { ok: true, user, principal: { kind: 'user', user, token } };
}
