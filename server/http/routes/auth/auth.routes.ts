import type { Request, Response } from 'express';
import { ipKeyGenerator, rateLimit } from 'express-rate-limit';
import { LoginBodySchema } from '../../../../shared/schemas/auth';
import { AppError } from '../../../errors';
import { SESSION_TTL_SECONDS, type AuthService } from '../../../services/auth.service';
import { currentUser, SESSION_COOKIE } from '../../middleware/auth';
import { input, validate } from '../../middleware/validate';
import { routeTable } from '../../route-table';

/** Failed sign-ins allowed per address and email in the window before 429. */
export const LOGIN_FAILURES_ALLOWED = 5;
const LOGIN_WINDOW_MS = 15 * 60 * 1000;

export function authRoutes(auth: AuthService) {
  const t = routeTable('/api/auth');
  const limiter = rateLimit({
    windowMs: LOGIN_WINDOW_MS,
    limit: LOGIN_FAILURES_ALLOWED,
    skipSuccessfulRequests: true,
    standardHeaders: 'draft-8',
    legacyHeaders: false,
    keyGenerator: (req) => `${ipKeyGenerator(req.ip ?? '')}|${String(req.body?.email ?? '').toLowerCase().trim()}`,
    handler: (_req, _res, next) => next(new AppError(429, 'rate_limited', 'Too many failed sign-ins; wait 15 minutes and try again')),
  });
  const login = { body: LoginBodySchema };
  t.add('post', '/login', null, limiter, validate(login), async (req: Request, res: Response) => {
    const { body } = input(res, login);
    const { token, user } = await auth.login(body.email, body.password);
    res.cookie(SESSION_COOKIE, token, {
      httpOnly: true,
      sameSite: 'lax',
      secure: req.secure,
      path: '/',
      maxAge: SESSION_TTL_SECONDS * 1000,
    });
    res.json(await auth.me({ id: user.id, email: user.email, name: user.name, role: user.role, jti: '' }));
  });
  t.add('post', '/logout', 'auth.self', async (req: Request, res: Response) => {
    await auth.logout(currentUser(res));
    res.clearCookie(SESSION_COOKIE, { path: '/', httpOnly: true, sameSite: 'lax', secure: req.secure });
    res.status(204).end();
  });
  t.add('get', '/me', 'auth.self', async (_req, res) => {
    res.json(await auth.me(currentUser(res)));
  });
  return t;
}
