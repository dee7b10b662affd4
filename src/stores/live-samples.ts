/**
 * High-rate live samples from the stream: one bounded ring buffer per channel (applied DP and
 * loop current). Writers push from the WebSocket; readers subscribe with `useSyncExternalStore`
 * (or directly, for canvas drawing). Listeners are notified at most once per animation frame,
 * however many samples arrived in it, so React and uPlot redraw at most once per frame.
 */
import { useSyncExternalStore } from 'react';

export type Channel = 'pressure' | 'current';

/** Default samples kept per channel: 4096, about 200 s at 20 readings/s. */
export const DEFAULT_CAPACITY = 4096;

/** A fixed-size ring of (wall-clock ms, value) pairs; `null` values (no reading) are kept as NaN. */
export class SampleRing {
  readonly capacity: number;
  private readonly t: Float64Array;
  private readonly v: Float64Array;
  private head = 0;
  private count = 0;

  constructor(capacity = DEFAULT_CAPACITY) {
    if (!(capacity > 0 && Number.isInteger(capacity))) throw new RangeError(`capacity ${capacity} must be a positive integer`);
    this.capacity = capacity;
    this.t = new Float64Array(capacity);
    this.v = new Float64Array(capacity);
  }

  get size(): number {
    return this.count;
  }

  push(wallMs: number, value: number | null): void {
    this.t[this.head] = wallMs;
    this.v[this.head] = value ?? Number.NaN;
    this.head = (this.head + 1) % this.capacity;
    if (this.count < this.capacity) this.count += 1;
  }

  /** Latest sample, or undefined when empty. */
  latest(): { wallMs: number; value: number | null } | undefined {
    if (this.count === 0) return undefined;
    const i = (this.head - 1 + this.capacity) % this.capacity;
    const v = this.v[i]!;
    return { wallMs: this.t[i]!, value: Number.isNaN(v) ? null : v };
  }

  /**
   * Copies the samples with wallMs ≥ `fromMs`, oldest first, into `out` (reused arrays, so a
   * redraw allocates nothing new once they have grown). Returns the number copied.
   */
  copySince(fromMs: number, out: { t: number[]; v: (number | null)[] }): number {
    let n = 0;
    const start = (this.head - this.count + this.capacity) % this.capacity;
    for (let k = 0; k < this.count; k++) {
      const i = (start + k) % this.capacity;
      const t = this.t[i]!;
      if (t < fromMs) continue;
      const v = this.v[i]!;
      out.t[n] = t;
      out.v[n] = Number.isNaN(v) ? null : v;
      n++;
    }
    out.t.length = n;
    out.v.length = n;
    return n;
  }

  clear(): void {
    this.head = 0;
    this.count = 0;
  }
}

type Scheduler = (cb: () => void) => void;

const defaultScheduler: Scheduler = (cb) => {
  if (typeof requestAnimationFrame === 'function') requestAnimationFrame(() => cb());
  else setTimeout(cb, 16);
};

/** The live-sample store: rings per channel, the unit of the pressure channel, a version counter. */
export class LiveSampleStore {
  readonly rings: Record<Channel, SampleRing>;
  /** Unit of the last pressure sample (instrument or calibrator unit id). */
  pressureUnit: string | null = null;
  /** Samples received since the page opened (both channels). */
  received = 0;
  /** Bench whose samples are kept; others are ignored. Null keeps every bench's. */
  bench: string | null = null;
  private version = 0;
  private readonly listeners = new Set<() => void>();
  private scheduled = false;

  constructor(
    capacity = DEFAULT_CAPACITY,
    private readonly schedule: Scheduler = defaultScheduler,
  ) {
    this.rings = { pressure: new SampleRing(capacity), current: new SampleRing(capacity) };
  }

  push(channel: Channel, wallMs: number, value: number | null, unit?: string | null): void {
    this.rings[channel].push(wallMs, value);
    if (channel === 'pressure' && unit) this.pressureUnit = unit;
    this.received += 1;
    this.version += 1;
    this.notifySoon();
  }

  /** Keep only `benchId`'s samples from now on (clears the rings when it changes). */
  setBench(benchId: string | null): void {
    if (this.bench === benchId) return;
    this.bench = benchId;
    this.clear();
  }

  clear(): void {
    this.rings.pressure.clear();
    this.rings.current.clear();
    this.version += 1;
    this.notifySoon();
  }

  /** Changes whenever a sample arrives; the `useSyncExternalStore` snapshot. */
  getVersion = (): number => this.version;

  subscribe = (listener: () => void): (() => void) => {
    this.listeners.add(listener);
    return () => this.listeners.delete(listener);
  };

  private notifySoon(): void {
    if (this.scheduled) return;
    this.scheduled = true;
    this.schedule(() => {
      this.scheduled = false;
      for (const l of [...this.listeners]) l();
    });
  }
}

/** The page's one live-sample store. */
export const liveSamples = new LiveSampleStore();

/** Latest value of both channels; re-renders at most once per animation frame. */
export function useLatestSamples(store: LiveSampleStore = liveSamples): {
  pressure: { wallMs: number; value: number | null } | undefined;
  current: { wallMs: number; value: number | null } | undefined;
  pressureUnit: string | null;
  version: number;
} {
  const version = useSyncExternalStore(store.subscribe, store.getVersion, store.getVersion);
  return { pressure: store.rings.pressure.latest(), current: store.rings.current.latest(), pressureUnit: store.pressureUnit, version };
}
