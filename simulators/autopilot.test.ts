import { describe, expect, it } from 'vitest';
import { SimRig } from './sim-rig';

/** Drives a SimRig on a manual clock and records (time, applied DP) every 50 ms. */
function fly(rig: SimRig, clock: { t: number }, seconds: number): { t: number; p: number; phase: string; index: number }[] {
  const trace: { t: number; p: number; phase: string; index: number }[] = [];
  for (let i = 0; i < seconds * 20; i += 1) {
    clock.t += 50;
    const s = rig.snapshot();
    trace.push({ t: clock.t, p: s.appliedDp, phase: s.autopilot?.phase ?? 'none', index: s.autopilot?.index ?? -1 });
  }
  return trace;
}

describe('autopilot', () => {
  it('walks the points up and down, approaching from the correct side, and dwells for the hold time', () => {
    const clock = { t: 0 };
    const rig = new SimRig({ now: () => clock.t, source: { timeConstantS: 0.5, isolateBand: 0.005 } });
    rig.apply({
      autopilot: {
        points: [
          { targetDp: 0, direction: 'up' },
          { targetDp: 50, direction: 'up' },
          { targetDp: 100, direction: 'up' },
          { targetDp: 50, direction: 'down' },
          { targetDp: 0, direction: 'down' },
        ],
        holdSeconds: 10,
        speed: 2,
      },
    });
    const trace = fly(rig, clock, 120);
    expect(trace.at(-1)?.phase).toBe('done');
    for (const [index, target, below] of [
      [1, 50, true],
      [2, 100, true],
      [3, 50, false],
    ] as const) {
      const approach = trace.filter((s) => s.index === index && s.phase === 'approach');
      expect(approach.length).toBeGreaterThan(0);
      // Never crosses the target on the way in.
      for (const s of approach) expect(below ? s.p <= target + 0.005 : s.p >= target - 0.005).toBe(true);
      const dwell = trace.filter((s) => s.index === index && s.phase === 'dwell');
      // 10 s hold at speed 2 → 5 s of dwell, sampled every 50 ms.
      expect(dwell.length * 50).toBeGreaterThanOrEqual(4950);
      expect(dwell.length * 50).toBeLessThanOrEqual(5100);
      for (const s of dwell) expect(Math.abs(s.p - target)).toBeLessThan(0.01);
    }
    rig.dispose();
  });

  it('injects a deliberate overshoot and a leak on request', () => {
    const clock = { t: 0 };
    const rig = new SimRig({ now: () => clock.t, source: { timeConstantS: 0.3, isolateBand: 0.005 } });
    rig.apply({
      autopilot: {
        points: [{ targetDp: 40, direction: 'up' }],
        holdSeconds: 20,
        overshoot: { fraction: 0.1 },
        leak: { perMin: 3 },
      },
    });
    const trace = fly(rig, clock, 30);
    expect(Math.max(...trace.map((s) => s.p))).toBeGreaterThan(42);
    const dwell = trace.filter((s) => s.phase === 'dwell');
    const first = dwell[0]!;
    const last = dwell.at(-1)!;
    // 3 units/min → 0.05 unit/s.
    expect((first.p - last.p) / ((last.t - first.t) / 1000)).toBeCloseTo(0.05, 3);
    rig.dispose();
  });
});
