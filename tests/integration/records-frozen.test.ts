import { spawnSync } from 'node:child_process';
import { createHash } from 'node:crypto';
import fs from 'node:fs/promises';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { siteRepository } from '../../server/db/repositories/user.repository';
import { ApiClient, DEMO_PASSWORD, demoEmail, startTestServer, type TestServer } from '../helpers/test-server';
import { completeChecklist, demoStandards, passingAsFound } from './records-helpers';

/**
 * Issue 11, finding 4 and acceptance 7: a signed record is frozen. Editing the instrument, the
 * standards and the site's settings after approval leaves the certificate's bytes and the record
 * hash as they were signed.
 */
let srv: TestServer;
let dir: string;
const c: Record<'tech' | 'lead' | 'admin' | 'auditor', ApiClient> = {} as never;
let jobId: string;
let instrumentId: string;

const sha = (b: Buffer) => createHash('sha256').update(b).digest('hex');

async function certificate(): Promise<Buffer> {
  const res = await fetch(`${srv.url}/api/jobs/${jobId}/certificate.pdf`, { headers: { cookie: c.auditor.cookie } });
  expect(res.status).toBe(200);
  return Buffer.from(await res.arrayBuffer());
}

function pdfText(pdf: Buffer, name: string): Promise<string> {
  return (async () => {
    const file = path.join(dir, name);
    await fs.writeFile(file, pdf);
    const r = spawnSync('pdftotext', [file, '-'], { encoding: 'utf8' });
    if (r.status !== 0) throw new Error(`pdftotext: ${r.stderr}`);
    return r.stdout.replace(/\s+/g, ' ');
  })();
}

async function recordCheck(revision?: number) {
  const r = await c.auditor.get(`/api/jobs/${jobId}/record${revision ? `?revision=${revision}` : ''}`);
  expect(r.status).toBe(200);
  return r.body as {
    record: { instrument: { urv: number; tolerancePct: number }; standards: Array<{ certificateNo: string; dueOn: string }>; site: { settings: Record<string, unknown> } } | null;
    hash: string | null;
    storedHashMatches: boolean | null;
    signatures: Array<{ recordHash: string; valid: boolean; decision: string }>;
  };
}

beforeAll(async () => {
  const has = spawnSync('sh', ['-c', 'command -v pdftotext']).status === 0;
  if (!has) throw new Error('This test needs pdftotext (poppler-utils): sudo apt-get install -y poppler-utils');
  srv = await startTestServer();
  dir = await fs.mkdtemp(path.join(os.tmpdir(), 'stillpoint-frozen-'));
  for (const who of ['tech', 'lead', 'admin', 'auditor'] as const) {
    c[who] = new ApiClient(srv.url);
    await c[who].login(demoEmail(who));
  }
  const techId = (await c.tech.get('/api/auth/me')).body.id as string;
  const job = ((await c.lead.get('/api/jobs')).body.items as Array<{ id: string; tag: string; instrumentId: string }>).find((j) => j.tag === 'FT-101')!;
  jobId = job.id;
  instrumentId = job.instrumentId;
  const s = await demoStandards(srv);
  await completeChecklist(c.tech, jobId, [s.pressure.id, s.current.id]);
  await passingAsFound(srv, jobId, 'FT-101', techId);
}, 180_000);
afterAll(async () => {
  await srv?.close();
  if (dir) await fs.rm(dir, { recursive: true, force: true });
});

describe('the demo history is frozen like a real record', () => {
  it('every approved demo job has a stored frozen record whose hash matches and which its signature signs', async () => {
    const approved = ((await c.lead.get('/api/records?status=approved')).body.items ?? []) as Array<{ jobId?: string; id?: string }>;
    expect(approved.length).toBeGreaterThan(3);
    for (const row of approved.slice(0, 8)) {
      const id = row.jobId ?? row.id!;
      const r = await c.auditor.get(`/api/jobs/${id}/record`);
      expect(r.status).toBe(200);
      expect(r.body.record, `job ${id} frozen`).not.toBeNull();
      expect(r.body.storedHashMatches).toBe(true);
      expect(r.body.signatures.length).toBeGreaterThan(0);
      for (const sig of r.body.signatures as Array<{ valid: boolean }>) expect(sig.valid).toBe(true);
    }
  });
});

describe('a signed record is frozen', () => {
  it('stores the record at submission with its hash', async () => {
    expect((await c.tech.post(`/api/jobs/${jobId}/submit`)).status).toBe(200);
    const rec = await recordCheck();
    expect(rec.record).not.toBeNull();
    expect(rec.hash).toMatch(/^[0-9a-f]{64}$/);
    expect(rec.storedHashMatches).toBe(true);
    const inst = (await c.auditor.get(`/api/instruments/${instrumentId}`)).body;
    expect(rec.record!.instrument).toMatchObject({ urv: inst.urv, tolerancePct: inst.tolerancePct });
    expect(rec.record!.standards).toHaveLength(2);
  });

  it('keeps the certificate byte for byte and the record hash valid after the instrument, the standards and the site settings change', async () => {
    const sign = await c.lead.post(`/api/jobs/${jobId}/review`, { decision: 'approve', password: DEMO_PASSWORD, meaning: 'reviewed and approved', comment: '' });
    expect(sign.status).toBe(200);
    const signedHash = sign.body.signature.recordHash as string;

    const first = await certificate();
    const again = await certificate();
    expect(sha(again)).toBe(sha(first));
    const before = await recordCheck();
    expect(before.hash).toBe(signedHash);
    expect(before.signatures.map((s) => s.valid)).toEqual([true]);
    const textBefore = await pdfText(first, 'before.pdf');
    // The approved revision's frozen record cannot be changed or removed in the database either.
    await expect(srv.database.exec(`update record_snapshots set hash = 'x' where job_id = '${jobId}'`)).rejects.toThrow(/approved/);
    await expect(srv.database.exec(`delete from record_snapshots where job_id = '${jobId}'`)).rejects.toThrow(/approved/);
    const runIds = ((await c.auditor.get(`/api/jobs/${jobId}`)).body.runs as Array<{ id: string }>).map((r) => r.id);
    const runResults = async () => Promise.all(runIds.map(async (id) => (await c.auditor.get(`/api/runs/${id}`)).body.results as unknown));
    const resultsBefore = await runResults();
    expect(resultsBefore.every((r) => r !== null)).toBe(true);

    // The register: range and tolerance.
    const inst = (await c.lead.get(`/api/instruments/${instrumentId}`)).body;
    const { id: _i, lastCalibratedOn: _l, nextDueOn: _n, createdAt: _c, updatedAt: _u, ...input } = inst;
    const edited = await c.lead.req('PUT', `/api/instruments/${instrumentId}`, { ...input, urv: inst.urv * 2, tolerancePct: inst.tolerancePct * 4, service: 'Renamed service', location: 'Moved elsewhere' });
    expect(edited.status, JSON.stringify(edited.body)).toBe(200);
    // The standards: certificate number, due date and accuracy.
    const s = await demoStandards(srv);
    for (const std of [s.pressure, s.current]) {
      const cur = (await c.lead.get(`/api/standards/${std.id}`)).body;
      const body = {
        kind: cur.kind,
        description: `${cur.description} (edited)`,
        serial: cur.serial,
        rangeMin: cur.rangeMin,
        rangeMax: cur.rangeMax,
        unit: cur.unit,
        accuracy: { ...cur.accuracy, pctReading: (cur.accuracy.pctReading ?? 0) + 0.5 },
        resolution: cur.resolution,
        certificateNo: `${cur.certificateNo}-X`,
        calibratedOn: '2025-01-02',
        dueOn: '2027-01-02',
      };
      const r = await c.lead.req('PUT', `/api/standards/${std.id}`, body);
      expect(r.status, JSON.stringify(r.body)).toBe(200);
    }
    // The site's settings: decision rule and hold time (no HTTP route edits them yet).
    const sites = siteRepository(srv.database.db);
    const site = (await sites.get())!;
    await sites.updateSettings(site.id, JSON.stringify({ ...JSON.parse(site.settings), decisionRule: 'simple', holdSeconds: 99 }));

    const after = await certificate();
    expect(sha(after)).toBe(sha(first));
    const rec = await recordCheck();
    expect(rec.hash).toBe(signedHash);
    expect(rec.storedHashMatches).toBe(true);
    expect(rec.signatures.map((x) => x.valid)).toEqual([true]);
    expect(rec.record!.instrument.urv).toBe(inst.urv);
    // GET /api/runs/:id answers with the results the record froze, not ones recomputed from the edited standards.
    expect(await runResults()).toEqual(resultsBefore);
    // What the certificate says is what was signed (the edited values appear nowhere).
    const textAfter = await pdfText(after, 'after.pdf');
    expect(textAfter).toBe(textBefore);
    expect(textAfter).not.toContain('Renamed service');
    expect(textAfter).not.toContain('-X');
    expect(textAfter).toContain(`±${(inst.tolerancePct as number).toFixed(2)} %`);
  }, 180_000);

  it('keeps each revision’s own frozen record when a correction is opened', async () => {
    const signed = (await recordCheck()).hash;
    const r = await c.lead.post(`/api/jobs/${jobId}/revisions`, { reason: 'Correct the permit number' });
    expect(r.status).toBe(201);
    const rev1 = (await c.auditor.get(`/api/jobs/${jobId}/revisions/1`)).body;
    expect(rev1.snapshot.record).toBeDefined();
    const check = await recordCheck(1);
    expect(check.hash).toBe(signed);
    expect(check.signatures.every((s) => s.valid)).toBe(true);
    // Revision 2 has no frozen record until it is submitted.
    expect((await recordCheck()).record).toBeNull();
  }, 60_000);
});
