import type { Duplex } from 'node:stream';
import { createReplaySlots } from './replay-slots';

/** Options of {@link createUpgradeGate}. */
export interface UpgradeGateOptions {
  /** Upgrades authenticated at once (each asks the database for the session). */
  atOnce: number;
  /** Upgrades that may wait their turn; one more is refused. */
  maxWaiting: number;
  /**
   * Upgrades from one client address that may wait their turn; one more from that address is
   * refused, so a single peer (signed in or not) cannot fill the whole queue. Default: no cap.
   */
  maxWaitingPerAddress?: number;
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
  const perAddress = o.maxWaitingPerAddress ?? Infinity;
  /** Upgrades waiting, by client address. */
  const waitingFrom = new Map<string, number>();
  return {
    /**
     * Runs `admit` when the socket's turn comes and frees the turn when it settles; false (and
     * nothing run) when too many are already waiting, in all or from `address` (the client's
     * address key, server/http/client-address.ts; undefined: not limited by address).
     */
    enter(socket: Duplex, admit: () => Promise<void>, address?: string): boolean {
      if (slots.stats().waiting >= o.maxWaiting) return false;
      let waiting = address !== undefined;
      if (address !== undefined) {
        const mine = waitingFrom.get(address) ?? 0;
        if (mine >= perAddress) return false;
        waitingFrom.set(address, mine + 1);
      }
      const leave = () => {
        if (!waiting || address === undefined) return;
        waiting = false;
        const n = (waitingFrom.get(address) ?? 1) - 1;
        if (n > 0) waitingFrom.set(address, n);
        else waitingFrom.delete(address);
      };
      const turn = slots.acquire('upgrade');
      socket.once('close', () => {
        leave();
        turn.cancel();
      });
      void turn.ready.then(async (done) => {
        leave();
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
    stats: () => ({ ...slots.stats(), addressesWaiting: waitingFrom.size }),
  };
}
