import type { NextFunction, Request, Response } from 'express';
import { AppError, forbidden, unauthenticated } from '../../errors';
import type { AuthService, SessionUser } from '../../services/auth.service';
import { allows, type Action } from '../policy';

export const SESSION_COOKIE = 'sp_session';

/** Reads the session cookie, if any, into res.locals.user. Never fails by itself. */
export function loadSession(auth: AuthService) {
  return async (req: Request, res: Response, next: NextFunction) => {
    const token = req.cookies?.[SESSION_COOKIE];
    if (typeof token === 'string' && token) {
      try {
        res.locals.user = await auth.verify(token);
      } catch (e) {
        res.locals.sessionError = e;
      }
    }
    next();
  };
}

export function currentUser(res: Response): SessionUser {
  const u = res.locals.user as SessionUser | undefined;
  if (!u) throw unauthenticated();
  return u;
}

/**
 * Guards a route with the policy table: 401 when signed out, 403 when the role may not, and 403
 * `password_change_required` for anything but the user's own account routes (`auth.self`: me,
 * sign-out, password change) until a user who must choose a new password has done so.
 */
export function allow(action: Action) {
  return (_req: Request, res: Response, next: NextFunction) => {
    const user = res.locals.user as SessionUser | undefined;
    if (!user) return next(res.locals.sessionError ?? unauthenticated());
    if (!allows(action, user.role)) return next(forbidden());
    if (user.mustChangePassword && action !== 'auth.self') {
      return next(new AppError(403, 'password_change_required', 'Choose a new password first (POST /api/auth/password)'));
    }
    next();
  };
}
