/**
 * Waits for the reference meter's reading to hold, for the HART loop-current trims: the bench's
 * current samples from the hub go through shared/calc's {@link HoldAnalyzer} (the capture engine's
 * hold logic, the current channel only; the DP channel is held at 0), restarted whenever the
 * reading is not stable once the hold time has passed. Resolves with the mean over the hold, mA.
 */
import { HoldAnalyzer } from '../../shared/calc';
import type { BenchHub } from '../bench/hub';

export interface MeterHoldOptions {
  hub: BenchHub;
  benchId: string;
  /** Hold time, ms. */
  holdMs: number;
  /** Give up after this long, ms. */
  timeoutMs: number;
  signal?: AbortSignal;
}

let counter = 0;

/** The meter's mean over a stable hold, mA; rejects on timeout or abort. */
export function waitForMeterHold(o: MeterHoldOptions): Promise<number> {
  return new Promise<number>((resolve, reject) => {
    // DP span 1 with DP held at 0: only the current's band and slope decide (defaults: 0.016 mA band).
    const h = new HoldAnalyzer({ dpSpan: 1, holdTimeMs: o.holdMs });
    const name = `hart-trim-hold-${++counter}`;
    const finish = (fn: () => void) => {
      clearTimeout(timer);
      o.signal?.removeEventListener('abort', onAbort);
      unsubscribe();
      fn();
    };
    const onAbort = () => finish(() => reject(o.signal?.reason instanceof Error ? o.signal.reason : new Error('aborted')));
    const timer = setTimeout(() => finish(() => reject(new Error(`the meter did not hold within ${Math.round(o.timeoutMs / 1000)} s`))), o.timeoutMs);
    const unsubscribe = o.hub.subscribe(name, (batch) => {
      for (const e of batch) {
        if (e.kind !== 'sample' || e.benchId !== o.benchId || e.device !== 'current' || e.value === null || e.backlog) continue;
        h.pushDp(e.tMs, 0);
        h.pushMa(e.tMs, e.value);
        const r = h.result();
        if (r.capturable) return finish(() => resolve(r.ma.mean));
        if (r.holdComplete && !r.stable) h.reset();
      }
    });
    if (o.signal?.aborted) onAbort();
    else o.signal?.addEventListener('abort', onAbort, { once: true });
  });
}
