import type { NextFunction, Request, Response } from 'express';
import { ipKeyGenerator, rateLimit } from 'express-rate-limit';
import { ChangePasswordBodySchema, LoginBodySchema } from '../../../../shared/schemas/auth';
import { AppError } from '../../../errors';
import { AccountLockedError, SESSION_TTL_SECONDS, type AuthService } from '../../../services/auth.service';
import { currentUser, SESSION_COOKIE } from '../../middleware/auth';
import { input, validate } from '../../middleware/validate';
import { routeTable } from '../../route-table';

/**
 * Failed sign-ins allowed per client address in the window before 429, whatever the accounts
 * (password spraying across accounts); each account has its own lock too (auth.service.ts). The
 * address is the socket's unless TRUST_PROXY names the proxies whose X-Forwarded-For to believe.
 */
export const ADDRESS_FAILURES_ALLOWED = 10;
const LOGIN_WINDOW_MS = 15 * 60 * 1000;

export function authRoutes(auth: AuthService) {
  const t = routeTable('/api/auth');
  const perAddress = rateLimit({
    windowMs: LOGIN_WINDOW_MS,
    limit: ADDRESS_FAILURES_ALLOWED,
    // Only refused sign-ins count (wrong password, locked account); malformed bodies do not.
    skipSuccessfulRequests: true,
    requestWasSuccessful: (_req, res) => res.statusCode < 400 || res.statusCode === 400,
    standardHeaders: 'draft-8',
    legacyHeaders: false,
    keyGenerator: (req) => ipKeyGenerator(req.ip ?? ''),
    handler: (_req, _res, next) => next(new AppError(429, 'rate_limited', 'Too many failed sign-ins from this address; wait 15 minutes and try again')),
  });
  const login = { body: LoginBodySchema };
  t.add('post', '/login', null, perAddress, validate(login), async (req: Request, res: Response, next: NextFunction) => {
    const { body } = input(res, login);
    let signedIn;
    try {
      signedIn = await auth.login(body.email, body.password);
    } catch (e) {
      if (e instanceof AccountLockedError) res.set('Retry-After', String(e.retryAfterSeconds));
      return next(e);
    }
    const { token, user } = signedIn;
    res.cookie(SESSION_COOKIE, token, {
      httpOnly: true,
      sameSite: 'lax',
      secure: req.secure,
      path: '/',
      maxAge: SESSION_TTL_SECONDS * 1000,
    });
    res.json(await auth.me({ id: user.id, email: user.email, name: user.name, role: user.role, jti: '', mustChangePassword: user.mustChangePassword }));
  });
  t.add('post', '/logout', 'auth.self', async (req: Request, res: Response) => {
    await auth.logout(currentUser(res));
    res.clearCookie(SESSION_COOKIE, { path: '/', httpOnly: true, sameSite: 'lax', secure: req.secure });
    res.status(204).end();
  });
  t.add('get', '/me', 'auth.self', async (_req, res) => {
    res.json(await auth.me(currentUser(res)));
  });
  const change = { body: ChangePasswordBodySchema };
  t.add('post', '/password', 'auth.self', validate(change), async (_req, res) => {
    const { body } = input(res, change);
    const user = currentUser(res);
    await auth.changePassword(user, body.current, body.next);
    res.json(await auth.me({ ...user, mustChangePassword: false }));
  });
  return t;
}
