/**
 * How many stream resumes replay at once: at most `total` in the process and `perUser` per
 * account; the others wait their turn in arrival order. A resume replays in pages and waits for
 * its socket to drain between them, so a few at a time keep the event loop free for HTTP.
 */

/** Options of {@link createReplaySlots}. */
export interface ReplaySlotOptions {
  /** Replays at once in the process. */
  total: number;
  /** Replays at once per account. */
  perUser: number;
}

interface Waiter {
  key: string;
  start: (release: () => void) => void;
  cancelled: boolean;
}

export function createReplaySlots(o: ReplaySlotOptions) {
  let active = 0;
  const perKey = new Map<string, number>();
  const queue: Waiter[] = [];
  const stats = { started: 0, maxActive: 0, maxPerUser: 0, waitedMax: 0 };

  function pump(): void {
    for (let i = 0; i < queue.length && active < o.total; ) {
      const w = queue[i]!;
      if (w.cancelled) {
        queue.splice(i, 1);
        continue;
      }
      const mine = perKey.get(w.key) ?? 0;
      if (mine >= o.perUser) {
        i++;
        continue;
      }
      queue.splice(i, 1);
      active++;
      perKey.set(w.key, mine + 1);
      stats.started++;
      stats.maxActive = Math.max(stats.maxActive, active);
      stats.maxPerUser = Math.max(stats.maxPerUser, mine + 1);
      let released = false;
      w.start(() => {
        if (released) return;
        released = true;
        active--;
        const n = (perKey.get(w.key) ?? 1) - 1;
        if (n) perKey.set(w.key, n);
        else perKey.delete(w.key);
        pump();
      });
    }
  }

  return {
    /**
     * Waits for a slot for account `key`; resolves with the function that frees it. `cancel()`
     * takes a waiter out of the queue (its socket closed); a cancelled wait never resolves.
     */
    acquire(key: string): { ready: Promise<() => void>; cancel: () => void } {
      let w!: Waiter;
      const ready = new Promise<() => void>((resolve) => {
        w = { key, start: resolve, cancelled: false };
      });
      queue.push(w);
      stats.waitedMax = Math.max(stats.waitedMax, queue.length);
      pump();
      return {
        ready,
        cancel: () => {
          w.cancelled = true;
        },
      };
    },
    /** Replays running now, and the most ever at once (in the process and for one account). */
    stats: () => ({ active, waiting: queue.filter((w) => !w.cancelled).length, ...stats }),
  };
}
export type ReplaySlots = ReturnType<typeof createReplaySlots>;
