/**
 * The retrying store step of the capture path. A run event whose store fails (a transient database
 * error: the PGlite worker busy or restarting, a PostgreSQL connection dropped) is stored again
 * after a backoff (shared/backoff.ts), a bounded number of times, before it is given up (logged,
 * never published). The caller awaits it inside the capture path's chain, so no later event
 * overtakes an event being retried. Retrying is safe because the writer's store is (run-events.ts).
 */
import type { Logger } from 'pino';
import { backoffDelay, type BackoffOptions } from '../../shared/backoff';
import type { RunEvent } from '../../shared/schemas/stream';
import { RunEventRefused, type StoreAttempts } from './run-events';

export interface StoreRetryOptions {
  /** Attempts per event, the first included; default 5. */
  attempts?: number;
  /** Delay before each retry; default 100 ms after the first failure, doubling, at most 2 s. */
  backoff?: BackoffOptions;
  /** Waits `ms` milliseconds (tests may shorten it); default a timer. */
  sleep?: (ms: number) => Promise<void>;
}

const DEFAULT_BACKOFF: BackoffOptions = { initialMs: 100, maxMs: 2000 };
const timer = (ms: number) => new Promise<void>((resolve) => setTimeout(resolve, ms));

/**
 * Stores `e` through `store`, retrying a failure; rejects with the last error once the attempts are
 * spent, or at once when the writer refuses the event ({@link RunEventRefused}: no retry can mend it).
 */
export async function storeWithRetry(
  e: RunEvent,
  store: (e: RunEvent, tries: StoreAttempts) => Promise<void>,
  logger: Pick<Logger, 'warn'>,
  o: StoreRetryOptions = {},
): Promise<void> {
  const attempts = Math.max(1, Math.floor(o.attempts ?? 5));
  const tries: StoreAttempts = { attempt: 1, firstAt: Date.now() };
  for (;;) {
    try {
      await store(e, tries);
      return;
    } catch (err) {
      if (err instanceof RunEventRefused || tries.attempt >= attempts) throw err;
      const delayMs = backoffDelay(tries.attempt, o.backoff ?? DEFAULT_BACKOFF);
      logger.warn({ err, runId: e.runId, event: e.type, attempt: tries.attempt, attempts, delayMs }, 'storing a run event failed; retrying');
      await (o.sleep ?? timer)(delayMs);
      tries.attempt++;
    }
  }
}
