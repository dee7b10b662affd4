import { describe, expect, it } from 'vitest';
import { createReplayPacer } from './replay-pacer';

describe('replay pacer', () => {
  it('rests restFactor times the work done since the last rest, across every replay', async () => {
    const slept: number[] = [];
    const pacer = createReplayPacer({ restFactor: 8, sleep: async (ms) => void slept.push(ms) });
    pacer.worked(0.05); // one replay's short page
    pacer.worked(0.05); // another's
    await pacer.rest(); // 0.8 ms owed: carried over, no timer
    expect(slept).toEqual([]);
    expect(pacer.stats().owedMs).toBeCloseTo(0.8, 9);
    pacer.worked(0.1);
    await pacer.rest();
    expect(slept).toHaveLength(1);
    expect(slept[0]).toBeCloseTo(1.6, 9);
    expect(pacer.stats()).toMatchObject({ rests: 1, owedMs: 0 });
    pacer.worked(2);
    await pacer.rest();
    expect(slept[1]).toBeCloseTo(16, 9);
    // A page slowed by other work on the machine: one rest is bounded, the rest of the debt forgiven.
    pacer.worked(30);
    await pacer.rest();
    expect(slept[2]).toBe(20);
    expect(pacer.stats().owedMs).toBe(0);
  });
});
