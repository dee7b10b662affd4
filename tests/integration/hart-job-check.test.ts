/**
 * HART in the job's preparation, on the real server (BENCH=sim, HART_IN_JOB=on, PGlite through the
 * migrations): the simulated transmitter is linear while the register says square root in the
 * transmitter, so the run start is refused with that reason; recording the device as found (with a
 * reason) or correcting the register (with a reason) lets it start, each audited and kept.
 */
import { describe, expect, it } from 'vitest';
import type { JobHart } from '../../shared/schemas/hart-job';
import { instrumentRepository } from '../../server/db/repositories/register.repository';
import { useHartJob } from './hart-job-helpers';

const ctx = useHartJob('PTW-HART-1');
async function auditActions(): Promise<string[]> {
  const r = await ctx.admin.get('/api/audit?limit=200');
  return ((r.body.items ?? []) as { action: string }[]).map((e) => e.action);
}

describe('HART identity and configuration check before a run', () => {
  it('reads commands 0, 13 and 15 and names the disagreement with the register', async () => {
    const r = await ctx.tech.post(`/api/jobs/${ctx.jobId}/hart/check`);
    expect(r.status).toBe(200);
    const h = r.body as JobHart;
    expect(h.available).toBe(true);
    expect(h.asFound).toMatchObject({ identity: { tag: 'FT-101', descriptor: 'SIM DP FLOW', deviceId: 0x00b2c7, expandedDeviceType: 0x3a51 }, config: { unit: 'inH2O@68F', lrv: 0, urv: 100, transferFunctionCode: 0, writeProtect: false } });
    expect(h.mismatches.map((m) => m.field)).toEqual(['transfer-function']);
    // The simulated device answers command 80 with "command not implemented": no sensor trim points.
    expect(h.asFound?.sensorTrim).toBe('no');
    expect(h.blockers[0]).toMatch(/Transfer function: the device is set to linear, the register says square root in the transmitter/);
  });

  it('refuses to start the run with the reason', async () => {
    const r = await ctx.tech.post(`/api/jobs/${ctx.jobId}/runs`, { kind: 'as-found' });
    expect(r.status).toBe(409);
    expect(r.body.error.message).toMatch(/HART device disagrees with the register: Transfer function/);
  });

  it('a correction needs a reason, is audited on the instrument and lets the run start', async () => {
    expect((await ctx.tech.post(`/api/jobs/${ctx.jobId}/hart/correct-register`, { reason: 'no' })).status).toBe(400);
    const r = await ctx.tech.post(`/api/jobs/${ctx.jobId}/hart/correct-register`, { reason: 'Transmitter was reconfigured to linear in 2025; DCS roots it' });
    expect(r.status).toBe(200);
    const h = r.body as JobHart;
    expect(h.mismatches).toEqual([]);
    expect(h.blockers).toEqual([]);
    expect(h.resolution).toMatchObject({ kind: 'register-corrected', mismatches: [{ field: 'transfer-function' }] });
    // The configuration as found stays what was first read.
    expect(h.asFound?.config.transferFunctionCode).toBe(0);
    const inst = await instrumentRepository(ctx.srv.database.db).findByTag('FT-101');
    expect(inst).toMatchObject({ outputMode: 'linear', cutoffMode: 'none' });
    const actions = await auditActions();
    expect(actions).toEqual(expect.arrayContaining(['job.hart-read', 'instrument.corrected-from-device', 'job.hart-register-corrected']));
    const start = await ctx.tech.post(`/api/jobs/${ctx.jobId}/runs`, { kind: 'as-found' });
    expect(start.status).toBe(201);
    expect((await ctx.tech.post(`/api/runs/${start.body.id}/abort`)).status).toBe(200);
  });

  it('recording the device as found is an explicit, audited acknowledgement that covers only what was seen', async () => {
    // The device is now re-ranged: a new disagreement blocks again until acknowledged.
    expect((await ctx.admin.post('/api/sim', { transmitter: { urv: 150 } })).status).toBe(200);
    const checked = (await ctx.tech.post(`/api/jobs/${ctx.jobId}/hart/check`)).body as JobHart;
    expect(checked.mismatches.map((m) => m.field)).toEqual(['range']);
    expect(checked.blockers).toHaveLength(1);
    expect((await ctx.tech.post(`/api/jobs/${ctx.jobId}/runs`, { kind: 'as-found' })).status).toBe(409);
    const r = await ctx.tech.post(`/api/jobs/${ctx.jobId}/hart/as-found`, { reason: 'Re-ranged by operations; recorded as found for the record' });
    expect(r.status).toBe(200);
    expect((r.body as JobHart).resolution).toMatchObject({ kind: 'recorded-as-found', mismatches: [{ field: 'range', device: '0–150 inH2O at 68 °F' }] });
    expect((r.body as JobHart).blockers).toEqual([]);
    expect(await auditActions()).toContain('job.hart-recorded-as-found');
    const start = await ctx.tech.post(`/api/jobs/${ctx.jobId}/runs`, { kind: 'as-found' });
    expect(start.status).toBe(201);
    expect((await ctx.tech.post(`/api/runs/${start.body.id}/abort`)).status).toBe(200);
  });

  it('answers 404 for a job that does not exist, on every HART route (found by the API fuzz)', async () => {
    const none = '00000008-1ec9-4c3e-b537-8a32f25acf52';
    expect((await ctx.tech.get(`/api/jobs/${none}/hart`)).status).toBe(404);
    expect((await ctx.tech.post(`/api/jobs/${none}/hart/check`)).status).toBe(404);
    expect((await ctx.tech.post(`/api/jobs/${none}/hart/as-found`, { reason: 'No such job; nothing to record' })).status).toBe(404);
  });
});
