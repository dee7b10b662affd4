/**
 * The stream across crashes, short pass (issue 11, finding 7; the 20-kill proof is
 * tests/proof/stream-epochs.test.ts): the real server process is killed with SIGKILL twice while
 * the sim autopilot drives a capture; a viewer that resumes after each restart gets `stream.reset`
 * and never sees a seq it has seen before name a different sample or event.
 */
import { describe, expect, it } from 'vitest';
import { killAndResume } from '../helpers/stream-epochs';

describe('stream epochs under SIGKILL (2 kills)', () => {
  it('no seq names two different messages; each restart answers a resume with stream.reset', { timeout: 600_000 }, async () => {
    const out = await killAndResume({ kills: 2, seed: 7 });
    expect(out.clashes.slice(0, 5)).toEqual([]);
    expect(new Set(out.epochs).size).toBe(3);
    expect(out.restartAnswers).toEqual(['reset:epoch', 'reset:epoch']);
    expect(out.resetsWithinEpoch).toBe(0);
    expect(out.numberingRose).toBe(true);
    expect(out.seqsSeen).toBeGreaterThan(40);
  });
});
