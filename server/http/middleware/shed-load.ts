import type { NextFunction, Request, Response } from 'express';

/** Seconds a shed client is asked to wait (Retry-After). */
export const SHED_RETRY_AFTER_SECONDS = 1;

/**
 * Longest wait in the queue while it has stood for a whole interval, ms: a standing queue only
 * adds delay, so a request that cannot start almost at once is shed. CoDel's target of 5 ms
 * (K. Nichols and V. Jacobson, "Controlling Queue Delay", ACM Queue 10(5), 2012), as applied to
 * server request queues in B. Maurer, "Fail at Scale", ACM Queue 13(8), 2015 (M = 5 ms, from
 * memory).
 */
export const STANDING_QUEUE_WAIT_MS = 5;

export interface ShedOptions {
  /** Most requests served at once; beyond it new ones wait (see `targetMs`) or get 503. 0 turns shedding off. */
  maxInFlight: number;
  /**
   * Latency the served requests are held to, ms. While requests take longer, the limit in force
   * falls below `maxInFlight` (multiplicative decrease) and climbs back one step at a time while
   * they are quicker (additive increase); a request past the limit waits in a queue for a turn, up
   * to `targetMs` while the queue has been empty within the last `targetMs` (a burst, such as the
   * requests of one page) and up to {@link STANDING_QUEUE_WAIT_MS} while it has not (overload),
   * and gets 503 when its wait is up. 0 keeps the limit at `maxInFlight` and sheds at once past
   * it. Default 0.
   */
  targetMs?: number;
  /**
   * Lowest limit the adaptation may reach, and where it starts. Default 2: the main thread and the
   * database thread each kept busy; a page's own burst of requests waits in the queue.
   */
  minInFlight?: number;
  /** Most requests waiting for a turn; one more is shed at once. Default `maxInFlight`. */
  maxWaiting?: number;
  /** Requests never shed nor queued (they still count as in flight). */
  exempt?: (req: Request) => boolean;
  now?: () => number;
}

/** Share of the limit kept on a slow request, at most once per `targetMs` (our own figure). */
const DECREASE = 0.9;

/**
 * The limit in force, adapted to the latency of completed requests: additive increase,
 * multiplicative decrease (AIMD; D. Chiu and R. Jain, "Analysis of the increase and decrease
 * algorithms for congestion avoidance in computer networks", 1989), applied to requests in flight
 * as adaptive concurrency limits do (common practice). It starts at the floor. A request slower
 * than the target cuts the limit by a tenth (once per target period, so one burst does not
 * collapse it); a quicker one adds 1/limit, about one request per limit's worth of completions,
 * but only while the limit is in use (at least half of it in flight when the request ends): quick
 * answers at light load say nothing about heavier load, and a limit grown while idle would let
 * the next burst all in at once.
 */
export function adaptiveLimit(o: { max: number; min: number; targetMs: number; now: () => number }) {
  let limit = o.targetMs > 0 ? o.min : o.max;
  let lastCut = -Infinity;
  return {
    get value() {
      return Math.max(o.min, Math.floor(limit));
    },
    /** A request took `latencyMs` once started; `inFlight` were in flight when it ended, itself included. */
    completed(latencyMs: number, inFlight: number): void {
      if (o.targetMs <= 0) return;
      const t = o.now();
      if (latencyMs > o.targetMs) {
        if (t - lastCut >= o.targetMs) {
          limit = Math.max(o.min, limit * DECREASE);
          lastCut = t;
        }
      } else if (inFlight * 2 >= limit) limit = Math.min(o.max, limit + 1 / limit);
    },
  };
}

/**
 * How long a request may wait for a turn, controlled delay as in Maurer's server queues (after
 * CoDel, see {@link STANDING_QUEUE_WAIT_MS}): a queue that has been empty within the last
 * `intervalMs` is absorbing a burst, and a newcomer may wait up to `intervalMs`; one that has not
 * been empty for that long is standing, and a newcomer may wait only `standingMs`.
 */
export function controlledDelay(o: { intervalMs: number; standingMs: number; now: () => number }) {
  let lastEmpty = o.now();
  return {
    /** The queue is empty now (call whenever it is found or left empty). */
    empty(): void {
      lastEmpty = o.now();
    },
    /** Wait allowed to a request joining the queue now, ms. */
    timeoutMs(): number {
      return o.now() - lastEmpty > o.intervalMs ? o.standingMs : o.intervalMs;
    },
  };
}

interface Waiter {
  res: Response;
  next: NextFunction;
  timer: ReturnType<typeof setTimeout>;
  left: boolean;
}

/**
 * Load shedding: past the limit of requests in flight, a new request waits a short, controlled
 * time for a turn and is otherwise answered 503 with Retry-After, before any other work (parsing,
 * session look-up, database), so the requests taken are served fast instead of all queueing. The
 * limit adapts to the time the served requests take once started when `targetMs` is set (see
 * {@link adaptiveLimit} and {@link controlledDelay}). Mount it first.
 */
export function shedLoad(opts: ShedOptions) {
  const now = opts.now ?? (() => performance.now());
  const targetMs = opts.targetMs ?? 0;
  const limit = adaptiveLimit({ max: opts.maxInFlight, min: Math.min(opts.minInFlight ?? 2, opts.maxInFlight), targetMs, now });
  const delay = controlledDelay({ intervalMs: targetMs, standingMs: Math.min(STANDING_QUEUE_WAIT_MS, targetMs), now });
  const maxWaiting = targetMs > 0 ? (opts.maxWaiting ?? opts.maxInFlight) : 0;
  const queue: Waiter[] = [];
  let inFlight = 0;
  let shed = 0;
  let waitedMax = 0;

  const refuse = (res: Response) => {
    shed++;
    res.set('Retry-After', String(SHED_RETRY_AFTER_SECONDS));
    res.status(503).json({ error: { code: 'overloaded', message: 'The server is busy; try again in a moment' } });
  };

  const start = (res: Response, next: NextFunction, exempt: boolean) => {
    inFlight++;
    const started = now();
    let done = false;
    res.once('close', () => {
      if (done) return;
      done = true;
      if (!exempt) limit.completed(now() - started, inFlight);
      inFlight--;
      pump();
    });
    next();
  };

  const leave = (w: Waiter) => {
    w.left = true;
    clearTimeout(w.timer);
    const i = queue.indexOf(w);
    if (i !== -1) queue.splice(i, 1);
    if (!queue.length) delay.empty();
  };

  /** Starts waiting requests, oldest first, while the limit allows. */
  function pump(): void {
    while (queue.length && inFlight < limit.value) {
      const w = queue.shift()!;
      if (!queue.length) delay.empty();
      clearTimeout(w.timer);
      if (w.left) continue;
      w.left = true;
      start(w.res, w.next, false);
    }
  }

  const mw = (req: Request, res: Response, next: NextFunction) => {
    const exempt = opts.exempt?.(req) ?? false;
    if (opts.maxInFlight <= 0 || exempt || (inFlight < limit.value && !queue.length)) {
      if (!queue.length) delay.empty();
      return start(res, next, exempt);
    }
    if (queue.length >= maxWaiting) return refuse(res);
    const wait = delay.timeoutMs();
    const w: Waiter = {
      res,
      next,
      left: false,
      timer: setTimeout(() => {
        if (w.left) return;
        leave(w);
        refuse(res);
      }, wait),
    };
    queue.push(w);
    waitedMax = Math.max(waitedMax, queue.length);
    // A client that gives up while waiting leaves the queue.
    res.once('close', () => {
      if (!w.left) leave(w);
    });
  };
  return Object.assign(mw, { stats: () => ({ inFlight, waiting: queue.length, waitedMax, shed, limit: limit.value }) });
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
