import type { Duplex } from 'node:stream';
import { createReplaySlots } from './replay-slots';

/** Options of {@link createUpgradeGate}. */
export interface UpgradeGateOptions {
  /** Upgrades authenticated at once (each asks the database for the session). */
  atOnce: number;
  /** Upgrades that may wait their turn; one more is refused. */
  maxWaiting: number;
  /** An admission that failed (its socket is destroyed). */
  onError?: (err: unknown) => void;
}

/**
 * Lets socket upgrades through a few at a time, in arrival order (the replay slot queue with one
 * key), so that a burst of sockets does not put hundreds of session look-ups in the database's
 * queue ahead of HTTP requests. An upgrade whose socket closes while it waits leaves the queue.
 */
export function createUpgradeGate(o: UpgradeGateOptions) {
  const slots = createReplaySlots({ total: o.atOnce, perUser: o.atOnce });
  return {
    /**
     * Runs `admit` when the socket's turn comes and frees the turn when it settles; false (and
     * nothing run) when too many are already waiting.
     */
    enter(socket: Duplex, admit: () => Promise<void>): boolean {
      if (slots.stats().waiting >= o.maxWaiting) return false;
      const turn = slots.acquire('upgrade');
      socket.once('close', () => turn.cancel());
      void turn.ready.then(async (done) => {
        try {
          if (!socket.destroyed) await admit();
        } catch (err) {
          o.onError?.(err);
          socket.destroy();
        } finally {
          done();
        }
      });
      return true;
    },
    stats: () => slots.stats(),
  };
}
