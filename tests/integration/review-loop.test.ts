import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { tinyPdf, tinyPng } from '../fixtures/test-files';
import { ApiClient, DEMO_PASSWORD, demoEmail, startTestServer, type TestServer } from '../helpers/test-server';
import { completeChecklist, demoStandards, passingAsFound } from './records-helpers';

/**
 * The return loop, file removal on locked records, the review inbox, the records columns and the
 * audit trail in words — against the real server (PGlite through the migrations, the local fake SMTP).
 */
let srv: TestServer;
const c: Record<'tech' | 'tech2' | 'lead' | 'admin' | 'auditor', ApiClient> = {} as never;
let ids: Record<string, string>;
let jobA: string; // FT-101, tech
let jobB: string; // FT-301, tech2
let standards: Awaited<ReturnType<typeof demoStandards>>;

const approve = { decision: 'approve', password: DEMO_PASSWORD, meaning: 'reviewed and approved', comment: '' };
const giveBack = (comment: string) => ({ decision: 'return', password: DEMO_PASSWORD, meaning: 'returned for correction', comment });

async function upload(client: ApiClient, url: string, bytes: Buffer, type: string, name: string) {
  const form = new FormData();
  form.append('file', new Blob([new Uint8Array(bytes)], { type }), name);
  const res = await fetch(srv.url + url, { method: 'POST', body: form, headers: { origin: srv.url, cookie: client.cookie } });
  return { status: res.status, body: (await res.json()) as { id: string; fileId: string; error?: { message: string } } };
}
const remove = (client: ApiClient, id: string, body: unknown) => client.req('DELETE', `/api/attachments/${id}`, body);

/** Polls the Outbox (admin) for a message; short polls, no long sleeps. */
async function mail(subject: RegExp, to: string): Promise<{ text: string }> {
  const deadline = Date.now() + 20_000;
  while (Date.now() < deadline) {
    const items = (await c.admin.get('/api/outbox')).body.items as Array<{ id: string; subject: string; to: string[] }>;
    const hit = items.find((m) => subject.test(m.subject) && m.to.includes(to));
    if (hit) return (await c.admin.get(`/api/outbox/${hit.id}`)).body;
    await new Promise((r) => setTimeout(r, 100));
  }
  throw new Error(`no mail ${subject} to ${to}`);
}

beforeAll(async () => {
  srv = await startTestServer();
  for (const who of ['tech', 'tech2', 'lead', 'admin', 'auditor'] as const) {
    c[who] = new ApiClient(srv.url);
    await c[who].login(demoEmail(who));
  }
  ids = Object.fromEntries(await Promise.all((['tech', 'tech2'] as const).map(async (w) => [w, (await c[w].get('/api/auth/me')).body.id as string] as const)));
  const jobs = (await c.lead.get('/api/jobs')).body.items as Array<{ id: string; tag: string }>;
  jobA = jobs.find((j) => j.tag === 'FT-101')!.id;
  jobB = jobs.find((j) => j.tag === 'FT-301')!.id;
  standards = await demoStandards(srv);
  await completeChecklist(c.tech, jobA, [standards.pressure.id, standards.current.id]);
  await passingAsFound(srv, jobA, 'FT-101', ids.tech!);
  await completeChecklist(c.tech2, jobB, [standards.pressure.id, standards.current.id]);
  await passingAsFound(srv, jobB, 'FT-301', ids.tech2!);
}, 180_000);
afterAll(async () => {
  await srv?.close();
});

describe('the return loop', () => {
  let photoId: string;
  let certId: string;
  let certFileId: string;

  it('takes a photo and a certificate before submission; removal needs a reason (400 with the field) and is audited', async () => {
    const p1 = await upload(c.tech, `/api/jobs/${jobA}/photos`, tinyPng(), 'image/png', 'as-found-gauge.png');
    expect(p1.status, JSON.stringify(p1.body)).toBe(201);
    const p2 = await upload(c.tech, `/api/jobs/${jobA}/photos`, tinyPng(), 'image/png', 'wrong-tag.png');
    expect(p2.status).toBe(201);
    photoId = p1.body.id;
    const noReason = await remove(c.tech, p2.body.id, {});
    expect(noReason.status).toBe(400);
    expect(noReason.body.error.fields.reason[0]).toMatch(/why/i);
    expect((await remove(c.tech, p2.body.id, { reason: 'no' })).status).toBe(400);
    // Someone else's job photo: not theirs to remove.
    expect((await remove(c.tech2, p2.body.id, { reason: 'Photo of the wrong transmitter' })).status).toBe(403);
    const ok = await remove(c.tech, p2.body.id, { reason: 'Photo of the wrong transmitter' });
    expect(ok.status, JSON.stringify(ok.body)).toBe(200);
    const listed = (await c.lead.get(`/api/jobs/${jobA}/photos`)).body.items as Array<{ id: string; originalName: string; uploadedByName: string }>;
    expect(listed.map((a) => a.originalName)).toEqual(['as-found-gauge.png']);
    expect(listed[0]!.uploadedByName).toBeTruthy();
    const trail = (await c.auditor.get(`/api/audit?entityId=${jobA}&limit=1000`)).body.items as Array<{ action: string; after: { reason?: string } }>;
    expect(trail.find((e) => e.action === 'file.removed')?.after.reason).toBe('Photo of the wrong transmitter');

    const cert = await upload(c.lead, `/api/standards/${standards.pressure.id}/certificate`, tinyPdf(), 'application/pdf', 'pressure-cert.pdf');
    expect(cert.status).toBe(201);
    certId = cert.body.id;
    certFileId = cert.body.fileId;
    expect((await c.lead.get(`/api/standards/${standards.pressure.id}/certificates`)).body.items.map((a: { id: string }) => a.id)).toContain(certId);
  });

  it('stores the reply to a return with the resubmission, audits it, mails it and shows every round', async () => {
    expect((await c.tech.post(`/api/jobs/${jobA}/submit`)).status).toBe(200);
    // Locked while submitted: the photo and the certificate the frozen record cites stay.
    const lockedPhoto = await remove(c.tech, photoId, { reason: 'Tidying up the photos' });
    expect(lockedPhoto.status).toBe(423);
    const lockedCert = await remove(c.lead, certId, { reason: 'Superseded by a newer certificate' });
    expect(lockedCert.status, JSON.stringify(lockedCert.body)).toBe(423);
    expect(lockedCert.body.error.message).toMatch(/record/);

    const r1 = await c.lead.post(`/api/jobs/${jobA}/review`, giveBack('Point 3 down looks noisy; recheck the fittings.'));
    expect(r1.status, JSON.stringify(r1.body)).toBe(200);
    const detail = (await c.tech.get(`/api/jobs/${jobA}`)).body;
    expect(detail.status).toBe('returned');
    expect(detail.returned).toMatchObject({ comment: 'Point 3 down looks noisy; recheck the fittings.', byName: expect.any(String), at: expect.any(String) });
    expect((await mail(/^Returned with comments: FT-101$/, demoEmail('tech'))).text).toContain('recheck the fittings');

    const tooLong = await c.tech.post(`/api/jobs/${jobA}/submit`, { reply: 'x'.repeat(2001) });
    expect(tooLong.status).toBe(400);
    expect(tooLong.body.error.fields.reply).toBeDefined();
    const re = await c.tech.post(`/api/jobs/${jobA}/submit`, { reply: 'Fittings re-made and leak-tested; point 3 rechecked.' });
    expect(re.status, JSON.stringify(re.body)).toBe(200);
    expect(re.body.returned ?? null).toBeNull();

    const trail = (await c.auditor.get(`/api/audit?entityId=${jobA}&limit=1000`)).body.items as Array<{ action: string; after: { reply?: string; answers?: string } }>;
    const submitted = trail.filter((e) => e.action === 'job.submitted').at(-1)!;
    expect(submitted.after.reply).toBe('Fittings re-made and leak-tested; point 3 rechecked.');
    expect(submitted.after.answers).toBe(r1.body.signature.id);

    const m = await mail(/^Resubmitted for review: FT-101$/, demoEmail('lead'));
    expect(m.text).toContain('recheck the fittings');
    expect(m.text).toContain('Fittings re-made and leak-tested');
    expect(m.text).toContain(`/jobs/${jobA}/review`);

    // Second round: returned again, resubmitted; the review shows both rounds in order.
    expect((await c.lead.post(`/api/jobs/${jobA}/review`, giveBack('Attach the permit scan, please.'))).status).toBe(200);
    expect((await c.tech.get(`/api/jobs/${jobA}`)).body.returned.comment).toBe('Attach the permit scan, please.');
    expect((await c.tech.post(`/api/jobs/${jobA}/submit`, { reply: 'Scan attached to the permit log.' })).status).toBe(200);
    const bundle = (await c.lead.get(`/api/jobs/${jobA}/review`)).body;
    expect(bundle.exchanges).toEqual([
      expect.objectContaining({ comment: 'Point 3 down looks noisy; recheck the fittings.', reply: expect.objectContaining({ text: 'Fittings re-made and leak-tested; point 3 rechecked.' }) }),
      expect.objectContaining({ comment: 'Attach the permit scan, please.', reply: expect.objectContaining({ text: 'Scan attached to the permit log.', at: expect.any(String) }) }),
    ]);
    // A reply to a job that was not returned is refused.
    const tech2Submit = await c.tech2.post(`/api/jobs/${jobB}/submit`, { reply: 'Nothing to answer' });
    expect(tech2Submit.status).toBe(400);
    expect(tech2Submit.body.error.fields.reply).toBeDefined();
  });

  it('lists jobs awaiting review oldest first for leads only', async () => {
    expect((await c.tech2.post(`/api/jobs/${jobB}/submit`)).status).toBe(200);
    const inbox = await c.lead.get('/api/review/inbox');
    expect(inbox.status).toBe(200);
    const items = inbox.body.items as Array<{ id: string; tag: string; submittedAt: string; returns: number }>;
    expect(inbox.body.count).toBe(items.length);
    const at = items.map((i) => i.submittedAt);
    expect(at).toEqual([...at].sort());
    // jobA was (re)submitted before jobB.
    expect(items.findIndex((i) => i.id === jobA)).toBeLessThan(items.findIndex((i) => i.id === jobB));
    expect(items.find((i) => i.id === jobA)).toMatchObject({ tag: 'FT-101', returns: 2 });
    expect((await c.tech.get('/api/review/inbox')).status).toBe(403);
  });

  it('refuses removal on an approved record', async () => {
    expect((await c.lead.post(`/api/jobs/${jobA}/review`, approve)).status).toBe(200);
    const r = await remove(c.tech, photoId, { reason: 'Tidying up the photos' });
    expect(r.status).toBe(423);
    expect(r.body.error.message).toMatch(/approved/);
    expect((await remove(c.lead, certId, { reason: 'Superseded by a newer certificate' })).status).toBe(423);
    expect((await c.lead.get(`/api/jobs/${jobA}/photos`)).body.items).toHaveLength(1);
    // A newer certificate becomes the standard's; the approved record still shows the one it cited.
    const newer = await upload(c.lead, `/api/standards/${standards.pressure.id}/certificate`, Buffer.concat([tinyPdf(), Buffer.from('% renewed\n')]), 'application/pdf', 'pressure-cert-2027.pdf');
    expect(newer.status).toBe(201);
    expect(newer.body.fileId).not.toBe(certFileId);
    expect((await c.lead.get(`/api/standards/${standards.pressure.id}`)).body.certificateFileId).toBe(newer.body.fileId);
    const cited = (await c.lead.get(`/api/jobs/${jobA}/review`)).body.job.standards.find((s: { id: string }) => s.id === standards.pressure.id);
    expect(cited.certificateFileId).toBe(certFileId);
    // A datasheet is not part of a record: a lead removes it, with a reason.
    const inst = (await c.lead.get('/api/instruments')).body.items[0].id as string;
    const d = await upload(c.lead, `/api/instruments/${inst}/datasheet`, tinyPdf(), 'application/pdf', 'sheet.pdf');
    expect((await remove(c.tech, d.body.id, { reason: 'Wrong model datasheet' })).status).toBe(403);
    expect((await remove(c.lead, d.body.id, { reason: 'Wrong model datasheet' })).status).toBe(200);
    expect((await c.lead.get(`/api/instruments/${inst}/datasheets`)).body.items).toEqual([]);
  });

  it('gives records a calibration date, as-found and as-left results, and filters on the date', async () => {
    const all = (await c.lead.get('/api/records?status=all')).body.items as Array<{ id: string; status: string; calibratedOn: string | null; asFound: string | null; asLeft: string | null }>;
    const a = all.find((r) => r.id === jobA)!;
    expect(a.calibratedOn).toMatch(/^\d{4}-\d{2}-\d{2}$/);
    expect(a.asFound).toBe('pass');
    expect(a.asLeft).toBeNull();
    // Newest calibration first, whatever the status.
    const dates = all.map((r) => r.calibratedOn ?? '');
    expect(dates.filter(Boolean)).toEqual([...dates.filter(Boolean)].sort().reverse());
    const day = a.calibratedOn!;
    const on = (await c.lead.get(`/api/records?from=${day}&to=${day}`)).body.items as Array<{ id: string; calibratedOn: string }>;
    expect(on.map((r) => r.id)).toContain(jobA);
    expect(on.every((r) => r.calibratedOn === day)).toBe(true);
    expect((await c.lead.get('/api/records?from=1999-01-01&to=1999-12-31')).body.items).toEqual([]);
    const bad = await c.lead.get('/api/records?from=2026-02-30');
    expect(bad.status).toBe(400);
    expect(JSON.stringify(bad.body.error.fields)).toMatch(/from/);
  });

  it('reads the audit trail in words: tag, action words, the actor’s name, and the bench for a hands-free capture', async () => {
    const items = (await c.auditor.get(`/api/audit?entityId=${jobA}&limit=1000`)).body.items as Array<{ action: string; summary: string; subject: string; actorName: string }>;
    const check = items.find((e) => e.action === 'job.checklist-changed')!;
    expect(check.summary).toBe('Checklist changed');
    expect(check.subject).toBe('FT-101');
    const techName = (await c.tech.get('/api/auth/me')).body.name as string;
    expect(check.actorName).toBe(techName);
    expect(items.find((e) => e.action === 'job.returned')!.summary).toBe('Returned with comments');

    // A hands-free capture names the bench and the run's performer.
    const runId = (await c.lead.get(`/api/jobs/${jobA}`)).body.runs[0].id as string;
    await srv.services.audit.record({ nonUser: 'bench local (hands-free capture)' }, 'run.point-captured', 'run', runId, undefined, {
      index: 2,
      by: { kind: 'bench', benchId: 'local', sources: { pressure: null, current: null }, performer: { id: ids.tech, email: demoEmail('tech') } },
    });
    const run = (await c.auditor.get(`/api/audit?entityId=${runId}`)).body.items as Array<{ action: string; summary: string; subject: string; actorName: string }>;
    const cap = run.find((e) => e.action === 'run.point-captured')!;
    expect(cap.summary).toBe('Point captured hands-free (point 3)');
    expect(cap.subject).toMatch(/^FT-101 as-found run$/);
    expect(cap.actorName).toBe(`Bench local (hands-free, run performed by ${techName})`);
    // The review page's trail reads the same way.
    const bundle = (await c.lead.get(`/api/jobs/${jobA}/review`)).body;
    expect(bundle.audit.find((e: { action: string }) => e.action === 'run.point-captured').actorName).toMatch(/^Bench local/);
  });
});
