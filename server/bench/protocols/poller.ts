/** Fixed-rate polling that never overlaps reads and keeps going through errors and disconnects. */

/** Options of {@link Poller}. */
export interface PollerOptions {
  /** Readings per second. Default 10 readings/s. */
  rateHz?: number;
  /** Called with every failed read (timeouts, bad replies, disconnected port). */
  onError?: (error: Error) => void;
}

/**
 * Calls `read` at `rateHz`. A read that takes longer than the period delays the next one rather
 * than overlapping it; the schedule does not drift while reads are fast.
 */
export class Poller {
  private readonly read: () => Promise<unknown>;
  private readonly onError: ((error: Error) => void) | undefined;
  private periodMs: number;
  private timer: NodeJS.Timeout | undefined;
  private running = false;
  private nextAt = 0;

  constructor(read: () => Promise<unknown>, options: PollerOptions = {}) {
    this.read = read;
    this.onError = options.onError;
    this.periodMs = 1000 / (options.rateHz ?? 10);
  }

  /** True between {@link start} and {@link stop}. */
  get active(): boolean {
    return this.running;
  }

  /** Starts polling, optionally at a new rate (readings/s). */
  start(rateHz?: number): void {
    if (rateHz !== undefined) this.periodMs = 1000 / rateHz;
    if (this.running) return;
    this.running = true;
    this.nextAt = performance.now();
    this.tick();
  }

  stop(): void {
    this.running = false;
    clearTimeout(this.timer);
  }

  private tick(): void {
    if (!this.running) return;
    this.nextAt += this.periodMs;
    this.read()
      .catch((error: unknown) => this.onError?.(error instanceof Error ? error : new Error(String(error))))
      .finally(() => {
        if (!this.running) return;
        const now = performance.now();
        // After a long stall (e.g. a timeout), restart the schedule instead of bursting to catch up.
        if (this.nextAt < now - this.periodMs) this.nextAt = now;
        this.timer = setTimeout(() => this.tick(), Math.max(0, this.nextAt - now));
      });
  }
}
