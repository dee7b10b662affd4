/**
 * Test support for the hold analysis under a loaded host: a fast first-order approach to a DP
 * target that is then held (and may leak), read at sparse, irregular times as when the event loop
 * is held up. Used by the hold and capture-engine tests; nothing in the product imports it.
 */
import type { Rng } from '../random';

/**
 * DP at time t (ms) of a first-order approach from `target − step` (time constant `tauMs`), held
 * once within `band` of the target, then falling at `leakPerMin` (DP units per minute).
 */
export function approachThenLeak(o: { target: number; step?: number; tauMs?: number; band?: number; leakPerMin?: number }): (tMs: number) => number {
  const { target, step = 3, tauMs = 75, band = 0.01, leakPerMin = 0 } = o;
  let isolatedAt: number | undefined;
  let held = 0;
  return (t) => {
    if (isolatedAt === undefined) {
      const v = target - step * Math.exp(-t / tauMs);
      if (target - v > band) return v;
      isolatedAt = t;
      held = v;
    }
    return held - (leakPerMin / 60_000) * (t - isolatedAt);
  };
}

/**
 * Sparse, irregular reading times: mostly 60–180 ms apart, about one gap in seven 0.3–1.2 s, and
 * each reading taken up to 300 ms before it is stamped. Yields `{ t, readAt }` until `endMs`.
 */
export function* sparseReadings(rng: Rng, endMs: number): Generator<{ t: number; readAt: number }> {
  let t = 0;
  let readAt = 0;
  while (t < endMs) {
    const gap = rng() < 0.15 ? 300 + rng() * 900 : 60 + rng() * 120;
    t += gap;
    readAt = Math.max(readAt, t - rng() * Math.min(gap, 300));
    yield { t, readAt };
  }
}

/** Rounds to 5 decimals, as the simulated calibrator prints its readings. */
export const fiveDecimals = (x: number): number => Math.round(x * 1e5) / 1e5;
