/**
 * Who is opening `/ws`: the session cookie checked like an HTTP request's, and the role allowed to
 * subscribe. Kept apart from the stream server so that the identities a socket may carry (a
 * signed-in user; a registered bench agent) are decided in one place.
 */
import type http from 'node:http';
import { allows } from '../http/policy';
import { SESSION_COOKIE } from '../http/middleware/auth';
import type { AuthService, SessionUser } from '../services/auth.service';

export { SESSION_COOKIE };

/** Outcome of {@link authenticateUpgrade}. */
export type UpgradeAuth = { ok: true; user: SessionUser } | { ok: false; status: 401 | 403; message: string };

function parseCookies(header: string | undefined): Record<string, string> {
  const out: Record<string, string> = {};
  for (const part of (header ?? '').split(';')) {
    const i = part.indexOf('=');
    if (i < 0) continue;
    const k = part.slice(0, i).trim();
    try {
      out[k] = decodeURIComponent(part.slice(i + 1).trim());
    } catch {
      out[k] = part.slice(i + 1).trim();
    }
  }
  return out;
}

/** Authenticates an upgrade request from its session cookie. */
export async function authenticateUpgrade(req: http.IncomingMessage, auth: AuthService): Promise<UpgradeAuth> {
  const token = parseCookies(req.headers.cookie)[SESSION_COOKIE];
  let user: SessionUser | undefined;
  if (token) {
    try {
      user = await auth.verify(token);
    } catch {
      user = undefined;
    }
  }
  if (!user) return { ok: false, status: 401, message: 'Sign in first' };
  if (!allows('stream.subscribe', user.role)) return { ok: false, status: 403, message: 'Your role does not allow this' };
  return { ok: true, user };
}
