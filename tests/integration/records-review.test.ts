import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { ApiClient, DEMO_PASSWORD, demoEmail, startTestServer, type TestServer } from '../helpers/test-server';
import { completeChecklist, demoStandards, passingAsFound } from './records-helpers';

let srv: TestServer;
const c: Record<'tech' | 'tech2' | 'lead' | 'admin' | 'auditor', ApiClient> = {} as never;
let jobA: string; // FT-101, performed by tech
let jobB: string; // FT-301, performed by tech2
let ids: Record<string, string>;

async function auditOf(entityId: string): Promise<Array<{ action: string; before: unknown; after: unknown; actorEmail: string | null }>> {
  const r = await c.auditor.get(`/api/audit?entityId=${entityId}&limit=1000`);
  expect(r.status).toBe(200);
  return r.body.items;
}

beforeAll(async () => {
  srv = await startTestServer();
  for (const who of ['tech', 'tech2', 'lead', 'admin', 'auditor'] as const) {
    c[who] = new ApiClient(srv.url);
    await c[who].login(demoEmail(who));
  }
  ids = Object.fromEntries(
    await Promise.all((['tech', 'tech2', 'lead'] as const).map(async (w) => [w, (await c[w].get('/api/auth/me')).body.id as string] as const)),
  );
  const jobs = (await c.lead.get('/api/jobs')).body.items as Array<{ id: string; tag: string }>;
  jobA = jobs.find((j) => j.tag === 'FT-101')!.id;
  jobB = jobs.find((j) => j.tag === 'FT-301')!.id;
  const s = await demoStandards(srv);
  await completeChecklist(c.tech, jobA, [s.pressure.id, s.current.id]);
  await passingAsFound(srv, jobA, 'FT-101', ids.tech!);
  expect((await c.tech.post(`/api/jobs/${jobA}/submit`)).status).toBe(200);
  await completeChecklist(c.tech2, jobB, [s.pressure.id, s.current.id]);
  await passingAsFound(srv, jobB, 'FT-301', ids.tech2!);
  expect((await c.tech2.post(`/api/jobs/${jobB}/submit`)).status).toBe(200);
});
afterAll(async () => {
  await srv?.close();
});

const approve = { decision: 'approve', password: DEMO_PASSWORD, meaning: 'reviewed and approved', comment: '' };

describe('review and electronic signature', () => {
  it('refuses a technician, an admin and an auditor (only a lead signs)', async () => {
    for (const who of ['tech', 'admin', 'auditor'] as const) {
      const r = await c[who].post(`/api/jobs/${jobA}/review`, approve);
      expect(r.status, who).toBe(403);
    }
    expect((await c.lead.get(`/api/jobs/${jobA}`)).body.status).toBe('submitted');
  });

  it('refuses a lead who performed the work (as assignee), and audits the refusal', async () => {
    // tech2 did FT-301 and is then made a lead: they still may not sign their own work.
    const users = (await c.admin.get('/api/users')).body.items as Array<{ id: string; email: string }>;
    const t2 = users.find((u) => u.email === demoEmail('tech2'))!;
    expect((await c.admin.req('PATCH', `/api/users/${t2.id}`, { role: 'lead' })).status).toBe(200);
    await c.tech2.login(demoEmail('tech2')); // a role change ends the old session
    const r = await c.tech2.post(`/api/jobs/${jobB}/review`, { ...approve });
    expect(r.status).toBe(403);
    expect(r.body.error.message).toMatch(/performed/);
    const bundle = (await c.tech2.get(`/api/jobs/${jobB}/review`)).body;
    expect(bundle.canSign).toBe(false);
    expect(bundle.performers.map((p: { name: string }) => p.name)).toContain('Joss Amberley');
    expect((await auditOf(jobB)).some((e) => e.action === 'signature.refused')).toBe(true);
    expect((await c.lead.get(`/api/jobs/${jobB}`)).body.status).toBe('submitted');
  });

  it('refuses a lead who started one of the job’s runs', async () => {
    await passingAsFound(srv, jobB, 'FT-301', ids.lead!);
    const r = await c.lead.post(`/api/jobs/${jobB}/review`, approve);
    expect(r.status).toBe(403);
    expect(r.body.error.message).toMatch(/another lead must sign/);
  });

  it('fails a wrong signature password with 401, signs nothing, and audits the attempt', async () => {
    const r = await c.lead.post(`/api/jobs/${jobA}/review`, { ...approve, password: 'not-my-password-1' });
    expect(r.status).toBe(401);
    expect(r.body.error.fields.password).toBeDefined();
    expect((await c.lead.get(`/api/jobs/${jobA}`)).body.status).toBe('submitted');
    expect((await c.lead.get(`/api/jobs/${jobA}/signatures`)).body.items).toEqual([]);
    const failed = (await auditOf(jobA)).filter((e) => e.action === 'signature.failed');
    expect(failed).toHaveLength(1);
    expect(failed[0]!.actorEmail).toBe(demoEmail('lead'));
    expect(failed[0]!.after).toMatchObject({ decision: 'approve', reason: 'password not accepted' });
    // The session survives a wrong signature password.
    expect((await c.lead.get('/api/auth/me')).status).toBe(200);
  });

  it('asks for a meaning and a password', async () => {
    const r = await c.lead.post(`/api/jobs/${jobA}/review`, { decision: 'approve', password: '', meaning: '' });
    expect(r.status).toBe(400);
    expect(Object.keys(r.body.error.fields)).toEqual(expect.arrayContaining(['password', 'meaning']));
    const ret = await c.lead.post(`/api/jobs/${jobA}/review`, { decision: 'return', password: DEMO_PASSWORD, meaning: 'returned for correction', comment: '' });
    expect(ret.status).toBe(400);
    expect(ret.body.error.fields.comment).toBeDefined();
  });

  it('approves with a signature record: signer id, printed name, UTC date-time and meaning; the tag’s last calibration is updated', async () => {
    const before = (await c.lead.get(`/api/jobs/${jobA}`)).body;
    const r = await c.lead.post(`/api/jobs/${jobA}/review`, approve);
    expect(r.status).toBe(200);
    expect(r.body.job.status).toBe('approved');
    const sig = r.body.signature;
    expect(sig).toMatchObject({ signerId: ids.lead, signerName: 'Bram Oduya', signerEmail: demoEmail('lead'), meaning: 'reviewed and approved', decision: 'approve', revision: 1 });
    expect(sig.signedAt).toMatch(/^\d{4}-\d{2}-\d{2}T\d{2}:\d{2}:\d{2}\.\d{3}Z$/);
    expect(Math.abs(Date.parse(sig.signedAt) - Date.now())).toBeLessThan(60_000);
    expect(sig.recordHash).toMatch(/^[0-9a-f]{64}$/);
    expect((await c.tech.get(`/api/jobs/${jobA}/signatures`)).body.items).toHaveLength(1);
    const inst = (await c.lead.get(`/api/instruments/${before.instrumentId}`)).body;
    expect(inst.lastCalibratedOn).toBe(new Date(Date.now() - 3 * 3600_000 + 9 * 67_000).toISOString().slice(0, 10));
    const actions = (await auditOf(jobA)).map((e) => e.action);
    expect(actions).toEqual(expect.arrayContaining(['signature.applied', 'job.approved']));
    const instAudit = await auditOf(before.instrumentId);
    expect(instAudit.find((e) => e.action === 'instrument.calibration-recorded')).toMatchObject({ after: { lastCalibratedOn: inst.lastCalibratedOn } });
  });

  it('locks the approved record: checklist, assignment, runs and a second signature are refused', async () => {
    expect((await c.tech.req('PUT', `/api/jobs/${jobA}/checklist`, { permitNo: 'PTW-CHANGED' })).status).toBe(423);
    expect((await c.lead.post(`/api/jobs/${jobA}/assign`, { assigneeId: ids.tech })).status).toBe(423);
    expect((await c.lead.post(`/api/jobs/${jobA}/review`, approve)).status).toBe(423);
    const run = await c.tech.post(`/api/jobs/${jobA}/runs`, { kind: 'as-found' });
    expect([409, 423]).toContain(run.status);
    // A redo or a manual capture on one of its finished runs is refused too.
    const runId = (await c.tech.get(`/api/jobs/${jobA}`)).body.runs[0].id;
    expect((await c.tech.post(`/api/runs/${runId}/points/0/redo`)).status).toBe(423);
    expect((await c.tech.post(`/api/runs/${runId}/points/0/capture`, { reason: 'changing an approved record' })).status).toBe(423);
    expect((await c.tech.post(`/api/jobs/${jobA}/submit`)).status).toBe(400);
    // Signatures are append-only in the database itself.
    await expect(srv.database.exec(`UPDATE signatures SET meaning = 'forged' WHERE job_id = '${jobA}'`)).rejects.toThrow(/append-only/);
    expect((await c.lead.get(`/api/jobs/${jobA}`)).body.checklist.permitNo).toBe('PTW-T-0099');
  });

  it('corrects an approved record only through a revision with a reason, keeping the old revision readable', async () => {
    expect((await c.tech.post(`/api/jobs/${jobA}/revisions`, { reason: 'Wrong permit number recorded' })).status).toBe(403);
    expect((await c.lead.post(`/api/jobs/${jobA}/revisions`, { reason: 'no' })).status).toBe(400);
    const r = await c.lead.post(`/api/jobs/${jobA}/revisions`, { reason: 'Wrong permit number recorded' });
    expect(r.status).toBe(201);
    expect(r.body).toMatchObject({ status: 'in-progress', revision: 2 });
    const list = (await c.auditor.get(`/api/jobs/${jobA}/revisions`)).body.items;
    expect(list).toEqual([expect.objectContaining({ revision: 1, reason: 'Wrong permit number recorded', createdByName: 'Bram Oduya' })]);
    const old = (await c.auditor.get(`/api/jobs/${jobA}/revisions/1`)).body;
    expect(old.snapshot.job).toMatchObject({ status: 'approved', revision: 1 });
    expect(old.snapshot.job.checklist.permitNo).toBe('PTW-T-0099');
    expect(old.snapshot.runs).toHaveLength(1);
    expect(old.snapshot.runs[0].points).toHaveLength(9);
    expect(old.snapshot.signatures).toEqual([expect.objectContaining({ meaning: 'reviewed and approved', signerName: 'Bram Oduya' })]);
    // Now the correction can be made, and it is audited with old and new values.
    const fix = await c.tech.req('PUT', `/api/jobs/${jobA}/checklist`, { permitNo: 'PTW-T-0100' });
    expect(fix.status).toBe(200);
    const trail = await auditOf(jobA);
    expect(trail.find((e) => e.action === 'job.revision-opened')).toMatchObject({ before: { revision: 1 }, after: { revision: 2, reason: 'Wrong permit number recorded' } });
    const change = trail.filter((e) => e.action === 'job.checklist-changed').at(-1)!;
    expect(change.before).toMatchObject({ permitNo: 'PTW-T-0099' });
    expect(change.after).toMatchObject({ permitNo: 'PTW-T-0100' });
    expect((await c.lead.get(`/api/jobs/${jobA}/revisions/2`)).status).toBe(404);
  });

  it('returns a resubmitted revision with comments; the signature records the meaning', async () => {
    expect((await c.tech.post(`/api/jobs/${jobA}/submit`)).status).toBe(200);
    const r = await c.lead.post(`/api/jobs/${jobA}/review`, {
      decision: 'return',
      password: DEMO_PASSWORD,
      meaning: 'returned for correction',
      comment: 'Attach the permit scan before resubmitting.',
    });
    expect(r.status).toBe(200);
    expect(r.body.job.status).toBe('returned');
    expect(r.body.signature).toMatchObject({ decision: 'return', revision: 2, comment: 'Attach the permit scan before resubmitting.' });
    const bundle = (await c.lead.get(`/api/jobs/${jobA}/review`)).body;
    expect(bundle.signatures).toHaveLength(2);
    expect(bundle.revisions).toHaveLength(1);
    expect(bundle.audit.map((e: { action: string }) => e.action)).toEqual(expect.arrayContaining(['job.returned', 'signature.applied', 'job.submitted']));
    const recs = (await c.auditor.get('/api/records?status=all')).body.items as Array<{ id: string; revisions: number; lastSignature: { decision: string } }>;
    expect(recs.find((x) => x.id === jobA)).toMatchObject({ revisions: 1, lastSignature: { decision: 'return' } });
  });
});
