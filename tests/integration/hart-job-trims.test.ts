/**
 * Trims by HART command from the job (real server, BENCH=sim, HART_IN_JOB=on, PGlite through the
 * migrations, the meter read through the hub): the hands-free output trim takes a 0.05 mA D/A error
 * to within 0.002 mA and leaves fixed current; an abort while fixed leaves it too; write protect
 * refuses; the zero trim sends command 43; every write is kept with the job and audited; stopping
 * the server in the middle of a trim leaves the device out of fixed current.
 */
import { beforeAll, describe, expect, it } from 'vitest';
import type { JobHart } from '../../shared/schemas/hart-job';
import { certificateFromRecord } from '../../server/certificates/certificate-record';
import { createRecordFreezer, frozenRecordHash } from '../../server/services/record-snapshot';
import { passingAsFound } from './records-helpers';
import { readyForRun } from '../helpers/e2e';
import { useHartJob } from './hart-job-helpers';

const ctx = useHartJob('PTW-HART-3', 1);
const CONFIRM = { loopInManual: true, operatorsInformed: true };

beforeAll(async () => {
  expect((await ctx.tech.post(`/api/jobs/${ctx.jobId}/hart/check`)).status).toBe(200);
}, 120_000);

const hart = async () => (await ctx.tech.get(`/api/jobs/${ctx.jobId}/hart`)).body as JobHart;

async function until(ok: (h: JobHart) => boolean, what: string, timeoutMs = 60_000): Promise<JobHart> {
  const end = performance.now() + timeoutMs;
  for (;;) {
    const h = await hart();
    if (ok(h)) return h;
    if (performance.now() > end) throw new Error(`timed out waiting for ${what}: ${JSON.stringify(h.trims.at(-1))}`);
    await new Promise((r) => setTimeout(r, 100));
  }
}

describe('HART output trim, hands-free', () => {
  it('asks for the cautions first', async () => {
    const r = await ctx.tech.post(`/api/jobs/${ctx.jobId}/hart/output-trim`, { loopInManual: true });
    expect(r.status).toBe(400);
  });

  it('trims a 0.05 mA D/A error to within 0.002 mA, verifies at 4, 12 and 20 mA and leaves fixed current', async () => {
    expect((await ctx.admin.post('/api/sim', { transmitter: { daErrorAt4Ma: 0.05, daErrorAt20Ma: 0.05 } })).status).toBe(200);
    const r = await ctx.tech.post(`/api/jobs/${ctx.jobId}/hart/output-trim`, CONFIRM);
    expect(r.status).toBe(202);
    expect((r.body as JobHart).trims.at(-1)?.status).toBe('running');
    const h = await until((x) => x.trims.at(-1)?.status !== 'running', 'the trim to end');
    const t = h.trims.at(-1)!;
    expect(t.error).toBeNull();
    expect(t.status).toBe('done');
    expect(t.fixedMa).toBeNull();
    const trimPoints = t.readings.filter((x) => x.stage === 'trim');
    expect(trimPoints.map((x) => x.fixedMa)).toEqual([4, 20]);
    expect(trimPoints[0]!.errorMa).toBeGreaterThan(0.045);
    const verify = t.readings.filter((x) => x.stage === 'verify');
    expect(verify.map((x) => x.fixedMa)).toEqual([4, 12, 20]);
    for (const v of verify) expect(Math.abs(v.errorMa)).toBeLessThan(0.002);
    expect(ctx.srv.rig!.snapshot().hart.trim.fixedMa).toBeNull();
    expect(h.loopCurrentFixed).toBe(false);
    // Every write: 40 (4), 45, 40 (20), 46, 40 × 3 (verify), 40 with 0; with request, reply, who and when.
    const cmds = h.writes.map((w) => w.command);
    expect(cmds).toEqual([40, 45, 40, 46, 40, 40, 40, 40]);
    expect(h.writes.every((w) => w.outcome === 'ok' && w.request.length > 0 && w.reply && w.byName && w.at)).toBe(true);
    expect(h.writes[1]!.value).toMatch(/^4\.0[45]\d* mA$/);
    const audit = ((await ctx.admin.get('/api/audit?limit=200')).body.items as { action: string }[]).filter((e) => e.action === 'job.hart-write');
    expect(audit.length).toBe(8);
    // The configuration as left is read again after the trim.
    expect((await until((x) => x.asLeft !== null, 'the configuration as left', 10_000)).asLeft?.identity.tag).toBe('FT-101');
  }, 90_000);

  it('an abort while the loop is fixed leaves fixed current', async () => {
    expect((await ctx.tech.post(`/api/jobs/${ctx.jobId}/hart/output-trim`, CONFIRM)).status).toBe(202);
    await until((x) => x.loopCurrentFixed && x.trims.at(-1)?.status === 'running' && x.trims.at(-1)?.fixedMa != null, 'the loop to be fixed', 20_000);
    expect(ctx.srv.rig!.snapshot().hart.trim.fixedMa).not.toBeNull();
    // No run starts while the loop is fixed: it would capture a fixed current.
    const start = await ctx.tech.post(`/api/jobs/${ctx.jobId}/runs`, { kind: 'as-found' });
    expect(start.status).toBe(409);
    expect(JSON.stringify(start.body)).toMatch(/trim/i);
    const r = await ctx.tech.post(`/api/jobs/${ctx.jobId}/hart/output-trim/abort`);
    expect(r.status).toBe(200);
    const t = (r.body as JobHart).trims.at(-1)!;
    expect(t.status).toBe('aborted');
    expect(t.fixedMa).toBeNull();
    expect(ctx.srv.rig!.snapshot().hart.trim.fixedMa).toBeNull();
    expect((r.body as JobHart).writes.at(-1)).toMatchObject({ command: 40, value: '0 mA (leave fixed current)', outcome: 'ok' });
  }, 60_000);

  it('refuses writes while the device reports write protect', async () => {
    expect((await ctx.admin.post('/api/sim', { hart: { writeProtect: true } })).status).toBe(200);
    const before = (await hart()).writes.length;
    const r = await ctx.tech.post(`/api/jobs/${ctx.jobId}/hart/output-trim`, CONFIRM);
    expect(r.status).toBe(409);
    expect(r.body.error.message).toMatch(/write protect/);
    expect((await ctx.tech.post(`/api/jobs/${ctx.jobId}/hart/zero-trim`, { zeroHeld: true })).status).toBe(409);
    expect((await hart()).writes.length).toBe(before);
    expect((await ctx.admin.post('/api/sim', { hart: { writeProtect: false } })).status).toBe(200);
  });

  it('the zero trim sends command 43 with zero held and keeps it', async () => {
    expect((await ctx.admin.post('/api/sim', { setpoint: { value: 0 } })).status).toBe(200);
    await new Promise((r) => setTimeout(r, 150));
    const r = await ctx.tech.post(`/api/jobs/${ctx.jobId}/hart/zero-trim`, { zeroHeld: true });
    expect(r.status).toBe(200);
    const h = r.body as JobHart;
    const t = h.trims.at(-1)!;
    expect(t).toMatchObject({ kind: 'zero-trim', status: 'done' });
    expect(Math.abs(t.pvAfter!)).toBeLessThan(0.05);
    expect(h.writes.at(-1)).toMatchObject({ command: 43, outcome: 'ok', step: 'zero-trim' });
  });

  it('the submission freezes the HART record (identity, as found and as left, every write) under the record hash, and the certificate is built from it', async () => {
    const techId = ((await ctx.tech.get('/api/auth/me')).body as { id: string }).id;
    await passingAsFound(ctx.srv, ctx.jobId, 'FT-101', techId);
    expect((await ctx.tech.req('PUT', `/api/jobs/${ctx.jobId}/checklist`, { returnedToService: true })).status).toBe(200);
    const live = await hart();
    const sub = await ctx.tech.post(`/api/jobs/${ctx.jobId}/submit`, {});
    expect(sub.status).toBe(200);
    const stored = await createRecordFreezer(ctx.srv.database.db, ctx.srv.services.audit).stored(ctx.jobId, sub.body.revision as number);
    const record = stored!.record;
    expect(record.hart?.asFound?.identity).toMatchObject({ tag: 'FT-101', deviceId: 0x00b2c7 });
    expect(record.hart?.asLeft).not.toBeNull();
    expect(record.hart?.writes).toEqual(live.writes);
    expect(record.hart?.writes.map((w) => w.command)).toContain(43);
    expect(frozenRecordHash(record)).toBe(stored!.hash);
    // Changing a write changes the hash: the hash covers them.
    const tampered = structuredClone(record);
    tampered.hart!.writes[1]!.value = '4.0000 mA';
    expect(frozenRecordHash(tampered)).not.toBe(stored!.hash);
    const cert = certificateFromRecord(record, { signatures: [], approved: false, draftDate: '2026-12-03' });
    expect(cert.hart?.writes.length).toBe(live.writes.length);
  }, 60_000);

  it('stopping the server during a trim leaves fixed current', async () => {
    // Another job of the technician's (this one is submitted and locked).
    ctx.jobId = await readyForRun(ctx.tech, 'PTW-HART-4', 'FT-102');
    expect((await ctx.tech.post(`/api/jobs/${ctx.jobId}/hart/output-trim`, CONFIRM)).status).toBe(202);
    await until((x) => x.trims.at(-1)?.status === 'running' && x.trims.at(-1)?.fixedMa != null, 'the loop to be fixed', 20_000);
    const rig = ctx.srv.rig!;
    expect(rig.snapshot().hart.trim.fixedMa).not.toBeNull();
    await ctx.stop();
    expect(rig.snapshot().hart.trim.fixedMa).toBeNull();
  }, 60_000);
});
