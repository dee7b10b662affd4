import { describe, expect, it } from 'vitest';
import { backoffDelay } from '../../shared/backoff';
import type { RunEvent } from '../../shared/schemas/stream';
import { storeWithRetry } from './run-commit';
import { RunEventRefused, type StoreAttempts } from './run-events';

const event: RunEvent = { type: 'run.changed', runId: 'r1', status: 'running', currentIndex: 0 };

/** A logger that keeps its warnings, and a sleep that records its delays without waiting. */
function harness() {
  const warned: Record<string, unknown>[] = [];
  const slept: number[] = [];
  return {
    warned,
    slept,
    logger: { warn: (o: Record<string, unknown>) => void warned.push(o) } as never,
    sleep: async (ms: number) => void slept.push(ms),
  };
}

/** A store that fails its first `n` calls, recording the attempt it was given each time. */
function failing(n: number, err: () => Error = () => new Error('transient')) {
  const seen: number[] = [];
  const tries: StoreAttempts[] = [];
  return {
    seen,
    tries,
    store: async (_e: RunEvent, t: StoreAttempts) => {
      seen.push(t.attempt);
      tries.push(t);
      if (seen.length <= n) throw err();
    },
  };
}

describe('storeWithRetry', () => {
  it('stores again after each failure with the shared backoff, the same attempt record, and a warning per retry', async () => {
    const h = harness();
    const s = failing(2);
    const backoff = { initialMs: 100, maxMs: 2000 };
    await storeWithRetry(event, s.store, h.logger, { attempts: 5, backoff, sleep: h.sleep });
    expect(s.seen).toEqual([1, 2, 3]);
    expect(new Set(s.tries).size).toBe(1);
    expect(h.slept).toEqual([backoffDelay(1, backoff), backoffDelay(2, backoff)]);
    expect(h.slept).toEqual([100, 200]);
    expect(h.warned.map((w) => [w.runId, w.event, w.attempt])).toEqual([
      ['r1', 'run.changed', 1],
      ['r1', 'run.changed', 2],
    ]);
  });

  it('gives up after the last attempt with its error, waiting only between attempts', async () => {
    const h = harness();
    const s = failing(Infinity, () => new Error(`failure ${s.seen.length}`));
    await expect(storeWithRetry(event, s.store, h.logger, { attempts: 3, sleep: h.sleep })).rejects.toThrow('failure 3');
    expect(s.seen).toEqual([1, 2, 3]);
    // Default backoff: 100 ms after the first failure, doubling.
    expect(h.slept).toEqual([100, 200]);
    expect(h.warned).toHaveLength(2);
  });

  it('caps the delay at the backoff maximum', async () => {
    const h = harness();
    const s = failing(Infinity);
    await expect(storeWithRetry(event, s.store, h.logger, { attempts: 8, backoff: { initialMs: 100, maxMs: 1000 }, sleep: h.sleep })).rejects.toThrow('transient');
    expect(h.slept).toEqual([100, 200, 400, 800, 1000, 1000, 1000]);
  });

  it('does not retry an event the writer refuses', async () => {
    const h = harness();
    const s = failing(Infinity, () => new RunEventRefused('contradicts what is stored'));
    await expect(storeWithRetry(event, s.store, h.logger, { sleep: h.sleep })).rejects.toBeInstanceOf(RunEventRefused);
    expect(s.seen).toEqual([1]);
    expect(h.slept).toEqual([]);
    expect(h.warned).toEqual([]);
  });

  it('defaults to five attempts', async () => {
    const h = harness();
    const s = failing(Infinity);
    await expect(storeWithRetry(event, s.store, h.logger, { sleep: h.sleep })).rejects.toThrow();
    expect(s.seen).toEqual([1, 2, 3, 4, 5]);
  });
});
