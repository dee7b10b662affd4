import type { NextFunction, Request, Response } from 'express';
import { AppError } from '../../errors';

const SAFE = new Set(['GET', 'HEAD', 'OPTIONS']);

/**
 * Cross-site request forgery guard for state-changing requests: the Origin (or, failing
 * that, the Referer) must be this server's own origin or one listed in ALLOWED_ORIGINS.
 * A request with neither header is accepted only without a session cookie (scripts that
 * sign in send their own cookie back and must then send Origin too).
 */
export function sameOrigin(allowed: string[]) {
  return (req: Request, _res: Response, next: NextFunction) => {
    if (SAFE.has(req.method)) return next();
    const own = `${req.protocol}://${req.get('host')}`;
    let origin = req.get('origin');
    if (!origin) {
      const ref = req.get('referer');
      if (ref) {
        try {
          origin = new URL(ref).origin;
        } catch {
          origin = 'invalid';
        }
      }
    }
    if (!origin) {
      if (req.cookies && Object.keys(req.cookies).length) return next(new AppError(403, 'cross_site', 'Request refused: no Origin header'));
      return next();
    }
    if (origin === own || allowed.includes(origin)) return next();
    next(new AppError(403, 'cross_site', 'Request refused: it came from another site'));
  };
}
