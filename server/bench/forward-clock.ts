/**
 * Server time decides: where the lines of a forwarded batch sit on this server's monotonic clock,
 * and whether the sender's clock is believable. A batch arrives at one instant; its lines carry the
 * sender's wall clock (metadata only). A line is placed at the arrival time less its age by the
 * sender's own clock (how long before sending it was read), but never after its arrival, never
 * before the bench's previous line or the sender's previous batch's arrival (a first batch sits
 * wholly at its arrival), and never more than `liveAgeMs` back: the sender's spacing may order
 * lines between two arrivals, it cannot stretch a hold beyond the time that really passed. A line older than that when sent (a backlog
 * held through a dropped link, or a clock that claims more time than passed) is a backlog line: it
 * is stored, and the capture engine does not count it toward a hold.
 */

/** A problem with a sender's clock; the run on the bench is warned of it. */
export interface ClockIssue {
  kind: 'ahead' | 'behind' | 'rate';
  message: string;
}

/** Options of {@link SenderClock}; defaults are product choices. */
export interface SenderClockOptions {
  /** Oldest a line may be, by the sender's clock, when its batch is sent, and still count as live, ms. Default 2 000. */
  liveAgeMs?: number;
  /** Largest plausible offset between the sender's clock and this server's, ms. Default 120 000 (2 min). */
  skewLimitMs?: number;
  /** Server time over which the sender's clock rate is compared with ours, ms. Default 5 000. */
  rateWindowMs?: number;
  /** Tolerated difference over a rate window: the larger of this many ms... Default 1 000. */
  rateToleranceMs?: number;
  /** ...and this fraction of the window. Default 0.1. */
  rateToleranceFrac?: number;
}

/** Where a batch's lines were placed. */
export interface Placement {
  /** Per line: monotonic time base for analysis, ms (this server's clock). */
  tMs: number[];
  /** Per line: a backlog line, not live when sent. */
  backlog: boolean[];
  /** Sender's clock minus ours at this batch (send time against arrival), ms. */
  skewMs: number;
  issues: ClockIssue[];
}

const fmt = (ms: number): string => {
  const a = Math.abs(ms);
  return a >= 3_600_000 ? `${(a / 3_600_000).toFixed(1)} h` : a >= 60_000 ? `${(a / 60_000).toFixed(1)} min` : `${(a / 1000).toFixed(1)} s`;
};

/** One sender's clock as this server sees it (one per forwarding sender). */
export class SenderClock {
  private readonly liveAgeMs: number;
  private readonly skewLimitMs: number;
  private readonly rateWindowMs: number;
  private readonly rateToleranceMs: number;
  private readonly rateToleranceFrac: number;
  private anchor: { skewMs: number; wallMs: number } | undefined;
  private lastArrivalMonoMs: number | undefined;
  /** Latest skew, ms; null before the first batch. */
  skewMs: number | null = null;

  constructor(o: SenderClockOptions = {}) {
    this.liveAgeMs = o.liveAgeMs ?? 2000;
    this.skewLimitMs = o.skewLimitMs ?? 120_000;
    this.rateWindowMs = o.rateWindowMs ?? 5000;
    this.rateToleranceMs = o.rateToleranceMs ?? 1000;
    this.rateToleranceFrac = o.rateToleranceFrac ?? 0.1;
  }

  /**
   * Places a batch. `arrivalMonoMs`/`arrivalWallMs`: when it arrived, on this server's monotonic and
   * wall clocks; `floorMonoMs`: the bench's latest placed line (lines never go before it).
   */
  place(batch: { sentWallMs: number; lines: readonly { wallMs: number }[] }, arrivalMonoMs: number, arrivalWallMs: number, floorMonoMs: number): Placement {
    const sent = batch.sentWallMs;
    const tMs: number[] = [];
    const backlog: boolean[] = [];
    let prev = Math.min(Math.max(floorMonoMs, this.lastArrivalMonoMs ?? arrivalMonoMs), arrivalMonoMs);
    this.lastArrivalMonoMs = arrivalMonoMs;
    for (const l of batch.lines) {
      // A line stamped after its own batch was sent is taken as read at the send.
      const age = Number.isFinite(l.wallMs) && l.wallMs < sent ? sent - l.wallMs : 0;
      const late = age > this.liveAgeMs;
      const t = Math.max(prev, arrivalMonoMs - Math.min(age, this.liveAgeMs));
      tMs.push(t);
      backlog.push(late);
      prev = t;
    }
    const skewMs = sent - arrivalWallMs;
    this.skewMs = skewMs;
    const issues: ClockIssue[] = [];
    if (Math.abs(skewMs) > this.skewLimitMs) {
      issues.push({
        kind: skewMs > 0 ? 'ahead' : 'behind',
        message: `The sender's clock is ${fmt(skewMs)} ${skewMs > 0 ? 'ahead of' : 'behind'} the server's; holds are timed on the server's clock, the sender's times are kept as metadata only`,
      });
    }
    if (!this.anchor) this.anchor = { skewMs, wallMs: arrivalWallMs };
    else {
      const window = arrivalWallMs - this.anchor.wallMs;
      if (window >= this.rateWindowMs) {
        const drift = skewMs - this.anchor.skewMs;
        if (Math.abs(drift) > Math.max(this.rateToleranceMs, this.rateToleranceFrac * window)) {
          issues.push({
            kind: 'rate',
            message: `The sender's clock ran ${fmt(window + drift)} while ${fmt(window)} passed on the server's; holds are timed on the server's clock`,
          });
        }
        this.anchor = { skewMs, wallMs: arrivalWallMs };
      }
    }
    return { tMs, backlog, skewMs, issues };
  }
}
