/**
 * A HART modem lost in the middle of the hands-free output trim (real server, BENCH=sim,
 * HART_IN_JOB=on): the trim ends at once, saying why; the device, cut off, stays fixed; once the
 * modem is back the driver leaves fixed current by itself (the simulator's own state is checked).
 */
import { describe, expect, it } from 'vitest';
import type { JobHart } from '../../shared/schemas/hart-job';
import { until, useHartJob } from './hart-job-helpers';

const ctx = useHartJob('PTW-HART-5');

const hart = async () => (await ctx.tech.get(`/api/jobs/${ctx.jobId}/hart`)).body as JobHart;

describe('HART output trim and a lost modem', () => {
  it('ends the trim and leaves fixed current once the modem is back', async () => {
    expect((await ctx.tech.post(`/api/jobs/${ctx.jobId}/hart/output-trim`, { loopInManual: true, operatorsInformed: true })).status).toBe(202);
    await until(hart, (h) => h.trims.at(-1)?.status === 'running' && h.trims.at(-1)?.fixedMa != null, 'the loop to be fixed');
    const rig = ctx.srv.rig!;
    expect(rig.snapshot().hart.trim.fixedMa).toBe(4);
    expect((await ctx.admin.post('/api/sim', { faults: { hart: { unplugged: true } } })).status).toBe(200);
    const ended = await until(hart, (h) => h.trims.at(-1)?.status !== 'running', 'the trim to end');
    const t = ended.trims.at(-1)!;
    expect(t.status).toBe('aborted');
    expect(t.error).toMatch(/disconnected/);
    // Cut off, the device keeps its fixed current; Stillpoint still counts the loop as fixed.
    expect(rig.snapshot().hart.trim.fixedMa).toBe(4);
    expect(ended.loopCurrentFixed).toBe(true);
    expect((await ctx.admin.post('/api/sim', { faults: { hart: { unplugged: false } } })).status).toBe(200);
    await until(() => rig.snapshot().hart.trim.fixedMa, (v) => v === null, 'the device to leave fixed current after the reconnect');
    await until(hart, (h) => !h.loopCurrentFixed, 'the job to show the loop free');
  }, 90_000);
});
