import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { ApproachTracker, backOffTarget, trackApproach } from './approach';

describe('approach tracker (approach direction: common practice, REFERENCE.md)', () => {
  it('upward approach, overshoot, back-off and re-approach', () => {
    const t = new ApproachTracker({ target: 50, window: 0.5, direction: 'up' });
    expect(t.status().state).toBe('waiting');
    expect(t.push(0, 40).state).toBe('approaching');
    expect(t.push(1, 49.8)).toMatchObject({ state: 'in-window', approachSeen: true, enteredAtMs: 1 });
    expect(t.push(2, 50.6)).toMatchObject({ state: 'overshoot', overshoots: 1 });
    expect(t.push(3, 50.2).state).toBe('overshoot'); // back inside from above: still wrong side
    expect(t.push(4, 49.6).state).toBe('overshoot'); // not yet past the window
    expect(t.push(5, 49).state).toBe('approaching'); // backed off past the point
    expect(t.push(6, 49.7)).toMatchObject({ state: 'in-window', approachSeen: true, overshoots: 1, enteredAtMs: 6 });
  });
  it('downward approach', () => {
    const t = new ApproachTracker({ target: 25, window: 0.5, direction: 'down' });
    t.push(0, 60);
    expect(t.push(1, 25.3).approachSeen).toBe(true);
    expect(t.push(2, 24.4).state).toBe('overshoot');
  });
  it('starting on the far side asks for a back-off but counts no overshoot', () => {
    const t = new ApproachTracker({ target: 1, window: 0.5, direction: 'up' });
    expect(t.push(0, 60)).toMatchObject({ state: 'overshoot', overshoots: 0 });
    expect(t.push(1, 1.2)).toMatchObject({ state: 'overshoot', overshoots: 0 }); // passing down through: still the wrong side
    expect(t.push(2, 0)).toMatchObject({ state: 'approaching', overshoots: 0 });
    expect(t.push(3, 0.9)).toMatchObject({ state: 'in-window', approachSeen: true, overshoots: 0 });
  });
  it('starting inside the window is in-window without a seen approach', () => {
    expect(trackApproach({ target: 0, window: 0.5, direction: 'up' }, [{ tMs: 0, value: 0.1 }])).toMatchObject({ state: 'in-window', approachSeen: false });
  });
  it('batch equals feeding one at a time (property)', () => {
    fc.assert(
      fc.property(fc.array(fc.double({ min: 40, max: 60, noNaN: true }), { maxLength: 100 }), fc.constantFrom('up' as const, 'down' as const), (vals, direction) => {
        const s = { target: 50, window: 0.5, direction };
        const t = new ApproachTracker(s);
        let last = t.status();
        vals.forEach((v, i) => (last = t.push(i, v)));
        expect(trackApproach(s, vals.map((value, tMs) => ({ tMs, value })))).toEqual(last);
      }),
    );
  });
});

describe('backOffTarget', () => {
  it('lies on the approach side, outside the window, so the tracker re-arms when it is reached', () => {
    for (const approach of ['up', 'down'] as const) {
      const p = { targetDp: 50, window: 0.5, approach };
      const b = backOffTarget(p);
      expect(b).toBe(approach === 'up' ? 48.5 : 51.5);
      const t = new ApproachTracker({ target: 50, window: 0.5, direction: approach });
      t.push(0, approach === 'up' ? 51 : 49); // starts beyond: overshoot side
      expect(t.push(1, b).state).toBe('approaching');
    }
  });
});
