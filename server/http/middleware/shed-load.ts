import type { NextFunction, Request, Response } from 'express';

/** Seconds a shed client is asked to wait (Retry-After). */
export const SHED_RETRY_AFTER_SECONDS = 1;

export interface ShedOptions {
  /** Requests served at once; beyond it new ones get 503. 0 turns shedding off. */
  maxInFlight: number;
  /** Requests never shed (they still count as in flight). */
  exempt?: (req: Request) => boolean;
}

/**
 * Load shedding: past `maxInFlight` requests in flight, a new request is answered 503 with
 * Retry-After at once, before any other work (parsing, session look-up, database), so the
 * requests already taken stay fast instead of all queueing. Mount it first.
 */
export function shedLoad(opts: ShedOptions) {
  let inFlight = 0;
  let shed = 0;
  const mw = (req: Request, res: Response, next: NextFunction) => {
    if (opts.maxInFlight > 0 && inFlight >= opts.maxInFlight && !opts.exempt?.(req)) {
      shed++;
      res.set('Retry-After', String(SHED_RETRY_AFTER_SECONDS));
      res.status(503).json({ error: { code: 'overloaded', message: 'The server is busy; try again in a moment' } });
      return;
    }
    inFlight++;
    let done = false;
    res.once('close', () => {
      if (!done) {
        done = true;
        inFlight--;
      }
    });
    next();
  };
  return Object.assign(mw, { stats: () => ({ inFlight, shed }) });
}

/**
 * What is never shed: the health check, sign-in and unlocking an account (an admin must be able to
 * get in and lift a lock while the server is busy), and run control and captures (a capture is
 * evidence and is not to be lost to load). The live stream is a WebSocket and never passes here.
 */
export function neverShed(req: Request): boolean {
  const p = req.path;
  if (p === '/api/health' || p === '/api/auth/login') return true;
  if (req.method === 'POST' && /^\/api\/users\/[^/]+\/unlock$/.test(p)) return true;
  if (req.method !== 'GET' && (p.startsWith('/api/runs/') || /^\/api\/jobs\/[^/]+\/runs$/.test(p) || p.startsWith('/api/benches'))) return true;
  return false;
}
