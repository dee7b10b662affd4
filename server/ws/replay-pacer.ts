/**
 * Keeps stream replays to a share of the event loop: every resume reports the time its pages took
 * to prepare and send, and before its next page it rests for `restFactor` times the work done
 * since the last rest, across all resumes of the process (a factor of 8 leaves replays at most a
 * ninth of the loop; our own figure, chosen with perf/replay-storm.bench.ts: on two busy cores
 * factors 1, 3 and 8 gave health p99 3x, 2.6x and 1.4x idle, and the replay throughput did not
 * fall, the clients' parsing being the narrower pipe there). Short pages of
 * well under a millisecond add up until a rest is worth a timer.
 */
export interface ReplayPacerOptions {
  restFactor: number;
  /** Work below this, ms, is carried over instead of rested for. Default 1. */
  minRestMs?: number;
  /**
   * Longest single rest, ms; what is owed beyond it is forgiven. On a machine busy with other work a
   * page's wall time (preemption included) overstates the replay's own work, and an unbounded rest
   * would slow every resume there for no gain. Default 20.
   */
  maxRestMs?: number;
  sleep?: (ms: number) => Promise<void>;
}

export function createReplayPacer(o: ReplayPacerOptions) {
  const minRest = o.minRestMs ?? 1;
  const maxRest = o.maxRestMs ?? 20;
  const sleep = o.sleep ?? ((ms: number) => new Promise<void>((r) => setTimeout(r, ms)));
  let owed = 0;
  const stats = { restedMs: 0, rests: 0 };
  return {
    /** Records `ms` of replay work. */
    worked(ms: number): void {
      owed += ms * o.restFactor;
    },
    /** Rests for the time owed, once it is worth a timer; resolves at once otherwise. */
    async rest(): Promise<void> {
      if (owed < minRest) return;
      const ms = Math.min(owed, maxRest);
      owed = 0;
      stats.restedMs += ms;
      stats.rests++;
      await sleep(ms);
    },
    stats: () => ({ ...stats, owedMs: owed }),
  };
}
