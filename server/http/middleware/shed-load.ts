import type { NextFunction, Request, Response } from 'express';

/** Seconds a shed client is asked to wait (Retry-After). */
export const SHED_RETRY_AFTER_SECONDS = 1;

export interface ShedOptions {
  /** Most requests served at once; beyond it new ones get 503. 0 turns shedding off. */
  maxInFlight: number;
  /**
   * Latency the served requests are held to, ms: while requests take longer, the limit in force
   * falls below `maxInFlight` (multiplicative decrease) and climbs back one step at a time while
   * they are quicker (additive increase). 0 keeps the limit at `maxInFlight`. Default 0.
   */
  targetMs?: number;
  /**
   * Lowest limit the adaptation may reach. Default 16: a page of the app asks up to about ten
   * things at once, so a slow machine serving a few people never sheds a page's own requests.
   */
  minInFlight?: number;
  /** Requests never shed (they still count as in flight). */
  exempt?: (req: Request) => boolean;
  now?: () => number;
}

/** Share of the limit kept on a slow request, at most once per `targetMs` (our own figure). */
const DECREASE = 0.9;

/**
 * The limit in force, adapted to the latency of completed requests: additive increase,
 * multiplicative decrease (AIMD; D. Chiu and R. Jain, "Analysis of the increase and decrease
 * algorithms for congestion avoidance in computer networks", 1989), applied to requests in flight
 * as adaptive concurrency limits do (common practice). A request slower than the target cuts the
 * limit by a tenth (once per target period, so one burst does not collapse it); a quicker one
 * adds 1/limit, about one request per limit's worth of completions.
 */
export function adaptiveLimit(o: { max: number; min: number; targetMs: number; now: () => number }) {
  let limit = o.max;
  let lastCut = -Infinity;
  return {
    get value() {
      return Math.max(o.min, Math.floor(limit));
    },
    completed(latencyMs: number): void {
      if (o.targetMs <= 0) return;
      const t = o.now();
      if (latencyMs > o.targetMs) {
        if (t - lastCut >= o.targetMs) {
          limit = Math.max(o.min, limit * DECREASE);
          lastCut = t;
        }
      } else limit = Math.min(o.max, limit + 1 / limit);
    },
  };
}

/**
 * Load shedding: past the limit of requests in flight, a new request is answered 503 with
 * Retry-After at once, before any other work (parsing, session look-up, database), so the
 * requests already taken stay fast instead of all queueing. The limit adapts to the latency of
 * the served requests when `targetMs` is set (see {@link adaptiveLimit}). Mount it first.
 */
export function shedLoad(opts: ShedOptions) {
  const now = opts.now ?? (() => performance.now());
  const limit = adaptiveLimit({ max: opts.maxInFlight, min: Math.min(opts.minInFlight ?? 16, opts.maxInFlight), targetMs: opts.targetMs ?? 0, now });
  let inFlight = 0;
  let shed = 0;
  const mw = (req: Request, res: Response, next: NextFunction) => {
    const exempt = opts.exempt?.(req) ?? false;
    if (opts.maxInFlight > 0 && inFlight >= limit.value && !exempt) {
      shed++;
      res.set('Retry-After', String(SHED_RETRY_AFTER_SECONDS));
      res.status(503).json({ error: { code: 'overloaded', message: 'The server is busy; try again in a moment' } });
      return;
    }
    inFlight++;
    const started = now();
    let done = false;
    res.once('close', () => {
      if (!done) {
        done = true;
        inFlight--;
        if (!exempt) limit.completed(now() - started);
      }
    });
    next();
  };
  return Object.assign(mw, { stats: () => ({ inFlight, shed, limit: limit.value }) });
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
