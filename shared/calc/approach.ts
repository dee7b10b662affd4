/**
 * Approach tracker: watches the applied DP on its way to a test point and tells whether the point
 * was reached from the required side. Approaching from the wrong side hides hysteresis, so after an
 * overshoot the technician must back off past the point and approach again (common practice,
 * REFERENCE.md; EURAMET cg-17 increasing and decreasing series).
 */
import type { Direction } from './plan';

/**
 * Tracker state.
 * `waiting` no sample yet; `approaching` on the correct side, outside the window;
 * `in-window` inside the window after a correct approach (or starting inside, see `approachSeen`);
 * `overshoot` beyond the window on the wrong side, or back in the window from the wrong side,
 * until it backs off past the window on the correct side.
 */
export type ApproachState = 'waiting' | 'approaching' | 'in-window' | 'overshoot';

/** Snapshot of an approach tracker. */
export interface ApproachStatus {
  state: ApproachState;
  /** True when the trace came into the window from the required side (false if it started inside). */
  approachSeen: boolean;
  /** Number of overshoots seen since the tracker started. */
  overshoots: number;
  /** Timestamp, ms, of the last entry into the window from the correct side; undefined if none. */
  enteredAtMs: number | undefined;
}

/** Approach tracker settings (all in the instrument's unit). */
export interface ApproachSettings {
  target: number;
  /** Window half-width, > 0. */
  window: number;
  direction: Direction;
}

/** Incremental approach tracker; O(1) per sample. */
export class ApproachTracker {
  private state: ApproachState = 'waiting';
  private approachSeen = false;
  private overshoots = 0;
  private enteredAtMs: number | undefined = undefined;

  constructor(private readonly settings: ApproachSettings) {
    if (!(settings.window > 0)) throw new RangeError('approach window must be > 0');
  }

  /** Signed position: negative on the correct (approach) side, positive on the far side. */
  private side(value: number): 'before' | 'inside' | 'beyond' {
    const { target, window, direction } = this.settings;
    const d = direction === 'up' ? value - target : target - value;
    if (d < -window) return 'before';
    if (d > window) return 'beyond';
    return 'inside';
  }

  /** Feed one applied-DP sample (time in ms, value in the instrument's unit). */
  push(tMs: number, value: number): ApproachStatus {
    const s = this.side(value);
    switch (this.state) {
      case 'waiting':
        if (s === 'before') this.state = 'approaching';
        else if (s === 'inside') {
          this.state = 'in-window';
          this.enteredAtMs = tMs;
        } else {
          // Starting on the far side is not an overshoot (nothing was approached yet), but the
          // point must still be approached from the correct side: back off past it first.
          this.state = 'overshoot';
        }
        break;
      case 'approaching':
        if (s === 'inside') {
          this.state = 'in-window';
          this.approachSeen = true;
          this.enteredAtMs = tMs;
        } else if (s === 'beyond') {
          this.state = 'overshoot';
          this.overshoots++;
        }
        break;
      case 'in-window':
        if (s === 'before') this.state = 'approaching';
        else if (s === 'beyond') {
          this.state = 'overshoot';
          this.overshoots++;
          this.enteredAtMs = undefined;
        }
        break;
      case 'overshoot':
        if (s === 'before') this.state = 'approaching';
        break;
    }
    return this.status();
  }

  /** Current snapshot. */
  status(): ApproachStatus {
    return {
      state: this.state,
      approachSeen: this.approachSeen && this.state === 'in-window',
      overshoots: this.overshoots,
      enteredAtMs: this.state === 'in-window' ? this.enteredAtMs : undefined,
    };
  }
}

/** Batch form: fold samples through a fresh tracker and return the final status. */
export function trackApproach(settings: ApproachSettings, samples: Iterable<{ tMs: number; value: number }>): ApproachStatus {
  const t = new ApproachTracker(settings);
  let s = t.status();
  for (const x of samples) s = t.push(x.tMs, x.value);
  return s;
}

/** How far past the window a back-off goes, in windows (product choice: clear of the window with room to approach slowly). */
export const BACK_OFF_WINDOWS = 3;

/**
 * Where to back off to after an overshoot: on the approach side, {@link BACK_OFF_WINDOWS} windows
 * from the target (the tracker needs only to leave the window; the margin leaves room for a slow
 * approach). The one rule the capture screen's guidance and the engine use.
 */
export function backOffTarget(p: { targetDp: number; window: number; approach: Direction }): number {
  const d = BACK_OFF_WINDOWS * p.window;
  return p.approach === 'up' ? p.targetDp - d : p.targetDp + d;
}
