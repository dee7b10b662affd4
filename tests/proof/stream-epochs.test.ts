/**
 * Acceptance 6 of issue 11: after 20 SIGKILLs during streaming (the sim autopilot driving a
 * capture), a viewer that resumes after each restart never sees a sequence number it has seen
 * before name a different sample or event; every resume across a restart is answered with
 * `stream.reset` (another epoch), every resume within an epoch is served, and the numbering of each
 * new epoch starts above everything seen before it. `PROOF_EPOCH_KILLS` sets the kills (PROOF_LEVEL=full:
 * 20; the short pass of `npm test`: 3), `PROOF_KILL_SEED` replays the kill moments.
 */
import { proofCount } from '../helpers/proof-level';
import { describe, expect, it } from 'vitest';
import { recordSummary } from '../helpers/proof-helpers';
import { killAndResume } from '../helpers/stream-epochs';

const KILLS = proofCount('PROOF_EPOCH_KILLS', 3, 20);
const SEED = Number(process.env.PROOF_KILL_SEED ?? Date.now() % 2 ** 31);

describe('stream epochs under SIGKILL', () => {
  it(`no seq names two different messages across ${KILLS} kills`, { timeout: 3_600_000 }, async () => {
    const out = await killAndResume({ kills: KILLS, seed: SEED, log: (l) => console.log(l) });
    const summary = { ...out, clashes: out.clashes.length, epochs: out.epochs.length, seed: SEED };
    console.log(`stream epochs: ${JSON.stringify(summary)}`);
    recordSummary('streamEpochs', summary);
    expect(out.clashes.slice(0, 5)).toEqual([]);
    expect(new Set(out.epochs).size).toBe(KILLS + 1);
    expect(out.restartAnswers).toEqual(Array.from({ length: KILLS }, () => 'reset:epoch'));
    expect(out.resetsWithinEpoch).toBe(0);
    expect(out.numberingRose).toBe(true);
    expect(out.seqsSeen).toBeGreaterThan(KILLS * 20);
  });
});
