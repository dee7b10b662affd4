import { describe, expect, it } from 'vitest';
import { startAutopilot } from './autopilot';
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
    // The overshoot goes past the window (default a sixth of the 1.2 margin); the autopilot then backs off and comes again.
    expect(Math.max(...trace.map((s) => s.p))).toBeGreaterThan(40 + 1.2 / 6);
    const dwell = trace.filter((s) => s.phase === 'dwell');
    const first = dwell[0]!;
    const last = dwell.at(-1)!;
    // 3 units/min → 0.05 unit/s.
    expect((first.p - last.p) / ((last.t - first.t) / 1000)).toBeCloseTo(0.05, 3);
    rig.dispose();
  });
});

describe('autopilot follows the run (issue 13)', () => {
  const points = [
    { targetDp: 10, direction: 'up' as const, window: 0.5 },
    { targetDp: 50, direction: 'up' as const, window: 0.5 },
    { targetDp: 90, direction: 'up' as const, window: 0.5 },
  ];

  it("starts at the run's current point, not at point 1", () => {
    const clock = { t: 0 };
    const rig = new SimRig({ now: () => clock.t, source: { timeConstantS: 0.3, isolateBand: 0.005 } });
    rig.apply({ autopilot: { points, holdSeconds: 4, startIndex: 2 } });
    const trace = fly(rig, clock, 20);
    expect(trace[0]!.index).toBe(2);
    expect(trace.some((s) => s.index < 2)).toBe(false);
    const dwell = trace.filter((s) => s.phase === 'dwell');
    expect(dwell.length).toBeGreaterThan(0);
    for (const s of dwell) expect(Math.abs(s.p - 90)).toBeLessThan(0.05);
    rig.dispose();
  });

  it('goes to the point the run moves to (a redo), approaching it from its correct side', () => {
    const clock = { t: 0 };
    const rig = new SimRig({ now: () => clock.t, source: { timeConstantS: 0.3, isolateBand: 0.005 } });
    rig.apply({ autopilot: { points, holdSeconds: 60, startIndex: 2 } });
    fly(rig, clock, 10); // at point 3, dwelling
    expect(rig.snapshot().autopilot).toMatchObject({ index: 2, phase: 'dwell' });
    rig.followAutopilotPoint(0); // the technician redoes point 1
    const trace = fly(rig, clock, 15);
    expect(trace.every((s) => s.index === 0)).toBe(true);
    const approach = trace.filter((s) => s.phase === 'approach');
    expect(approach.length).toBeGreaterThan(0);
    // Up to 10 from below: it vented down first and never crossed the target on the way in.
    for (const s of approach) expect(s.p).toBeLessThanOrEqual(10 + 0.5);
    expect(Math.abs(trace.at(-1)!.p - 10)).toBeLessThan(0.05);
    rig.followAutopilotPoint(null); // the run ended
    expect(rig.snapshot().autopilot?.phase).toBe('done');
    rig.dispose();
  });

  it('backs off and approaches again after an overshoot past the window, then dwells at the point', () => {
    const clock = { t: 0 };
    const rig = new SimRig({ now: () => clock.t, source: { timeConstantS: 0.3, isolateBand: 0.005 } });
    rig.apply({ autopilot: { points: [points[1]!], holdSeconds: 20, overshoot: { fraction: 0.2 } } });
    const trace = fly(rig, clock, 40);
    const firstOver = trace.findIndex((s) => s.p > 50 + 0.5);
    expect(firstOver).toBeGreaterThan(-1); // the deliberate overshoot happened
    // It stays past the window long enough for a bench reading it a few times a second to see it
    // (the autopilot backs off only once the pump has settled, as a technician would).
    const pastFor = trace.slice(firstOver).findIndex((s) => s.p <= 50 + 0.5);
    expect(trace[firstOver + pastFor]!.t - trace[firstOver]!.t).toBeGreaterThanOrEqual(500);
    const after = trace.slice(firstOver);
    const backOff = after.findIndex((s) => s.phase === 'pre-position');
    expect(backOff).toBeGreaterThan(-1); // it went back to pre-position...
    const second = after.slice(backOff);
    expect(Math.min(...second.map((s) => s.p))).toBeLessThan(50 - 0.5); // ...below the point
    const again = second.filter((s) => s.phase === 'approach');
    expect(again.length).toBeGreaterThan(0);
    for (const s of again) expect(s.p).toBeLessThanOrEqual(50 + 0.5); // the second approach is careful
    const dwell = second.filter((s) => s.phase === 'dwell');
    expect(dwell.length).toBeGreaterThan(0);
    for (const s of dwell) expect(Math.abs(s.p - 50)).toBeLessThan(0.05);
    rig.dispose();
  });

  it('never counts past the last point ("point 4/3" cannot happen)', () => {
    const clock = { t: 0 };
    const rig = new SimRig({ now: () => clock.t, source: { timeConstantS: 0.2, isolateBand: 0.005 } });
    rig.apply({ autopilot: { points, holdSeconds: 2 } });
    const trace = fly(rig, clock, 40);
    expect(trace.at(-1)).toMatchObject({ phase: 'done', index: 2 });
    expect(Math.max(...trace.map((s) => s.index))).toBe(2);
    expect(startAutopilot(0, 7, 3)).toMatchObject({ index: 2, phase: 'done' });
    rig.apply({ autopilot: { points, startIndex: 3 } });
    expect(rig.snapshot().autopilot).toMatchObject({ index: 2, phase: 'done', points: 3 });
    rig.dispose();
  });
});
