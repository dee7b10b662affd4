import fs from 'node:fs/promises';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { tinyPdf, tinyPng } from '../fixtures/test-files';
import { ApiClient, demoEmail, startTestServer, type TestServer } from '../helpers/test-server';

let srv: TestServer;
let lead: ApiClient;
let tech: ApiClient;
let auditor: ApiClient;
let standardId: string;
let instrumentId: string;
let techJobId: string;

/** Every regular file under `dir` (recursively), relative to it. */
async function filesUnder(dir: string): Promise<string[]> {
  const out: string[] = [];
  const walk = async (d: string) => {
    for (const e of await fs.readdir(d, { withFileTypes: true }).catch(() => [])) {
      const p = path.join(d, e.name);
      if (e.isDirectory()) await walk(p);
      else out.push(path.relative(dir, p));
    }
  };
  await walk(dir);
  return out.sort();
}
const leftovers = async () => ({ store: await filesUnder(srv.uploadDirs.store), tmp: await filesUnder(srv.uploadDirs.tmp) });

/** A multipart upload of one file in the field `file`, with the client's cookie and Origin. */
async function upload(client: ApiClient, url: string, bytes: Buffer, type: string, name: string) {
  const form = new FormData();
  form.append('file', new Blob([new Uint8Array(bytes)], { type }), name);
  const res = await fetch(srv.url + url, { method: 'POST', body: form, headers: { origin: srv.url, ...(client.cookie ? { cookie: client.cookie } : {}) } });
  const text = await res.text();
  return { status: res.status, body: text ? JSON.parse(text) : undefined };
}

beforeAll(async () => {
  srv = await startTestServer();
  lead = new ApiClient(srv.url);
  tech = new ApiClient(srv.url);
  auditor = new ApiClient(srv.url);
  await lead.login(demoEmail('lead'));
  const me = await tech.login(demoEmail('tech'));
  await auditor.login(demoEmail('auditor'));
  standardId = (await lead.get('/api/standards')).body.items[0].id;
  instrumentId = (await lead.get('/api/instruments')).body.items[0].id;
  const jobs = (await tech.get('/api/jobs')).body.items as Array<{ id: string; assigneeId: string; status: string }>;
  techJobId = jobs.find((j) => j.assigneeId === (me.user?.id ?? me.id) && j.status !== 'approved')!.id;
}, 180_000);
afterAll(async () => {
  await srv?.close();
});

describe('uploads', () => {
  it('refuses a file whose content does not match its declared type (415), leaving nothing behind', async () => {
    const before = await leftovers();
    const r = await upload(lead, `/api/standards/${standardId}/certificate`, tinyPng(), 'application/pdf', 'cert.pdf');
    expect(r.status, JSON.stringify(r.body)).toBe(415);
    expect(r.body.error.code).toBe('unsupported_media');
    // A type the route does not take is refused too, even when the content matches it.
    const png = await upload(lead, `/api/instruments/${instrumentId}/datasheet`, tinyPng(), 'image/png', 'sheet.png');
    expect(png.status).toBe(415);
    expect(await leftovers()).toEqual(before);
  });

  it('refuses an oversized file (413), leaving nothing behind', async () => {
    const before = await leftovers();
    const big = Buffer.concat([tinyPdf(), Buffer.alloc(10 * 1024 * 1024 + 10, 0x20)]);
    const r = await upload(lead, `/api/standards/${standardId}/certificate`, big, 'application/pdf', 'big.pdf');
    expect(r.status, JSON.stringify(r.body)).toBe(413);
    expect(r.body.error.code).toBe('payload_too_large');
    expect(await leftovers()).toEqual(before);
  });

  it('stores a good PDF as the standard certificate, audits it, and serves it only to signed-in users as an attachment', async () => {
    const pdf = tinyPdf();
    const r = await upload(lead, `/api/standards/${standardId}/certificate`, pdf, 'application/pdf', 'QCL cert.pdf');
    expect(r.status, JSON.stringify(r.body)).toBe(201);
    const fileId = r.body.fileId as string;
    expect(fileId).toMatch(/^[0-9a-f]{64}$/);
    expect((await lead.get(`/api/standards/${standardId}`)).body.certificateFileId).toBe(fileId);
    expect((await leftovers()).tmp).toEqual([]);
    expect((await leftovers()).store.some((f) => f.endsWith(fileId))).toBe(true);
    const trail = (await auditor.get(`/api/audit?entityId=${standardId}`)).body.items.map((e: { action: string }) => e.action);
    expect(trail).toEqual(expect.arrayContaining(['file.attached', 'standard.certificate-attached']));

    const got = await fetch(`${srv.url}/api/files/${fileId}`, { headers: { cookie: auditor.cookie } });
    expect(got.status).toBe(200);
    expect(got.headers.get('content-type')).toBe('application/pdf');
    expect(got.headers.get('content-disposition')).toMatch(/^attachment;/);
    expect(got.headers.get('x-content-type-options')).toBe('nosniff');
    expect(Buffer.from(await got.arrayBuffer()).equals(pdf)).toBe(true);
    expect((await fetch(`${srv.url}/api/files/${fileId}`)).status).toBe(401);
  });

  it('takes a datasheet from a lead only, and a photo only from the assigned technician', async () => {
    expect((await upload(tech, `/api/instruments/${instrumentId}/datasheet`, tinyPdf(), 'application/pdf', 'd.pdf')).status).toBe(403);
    expect((await upload(lead, `/api/instruments/${instrumentId}/datasheet`, tinyPdf(), 'application/pdf', 'd.pdf')).status).toBe(201);
    expect((await upload(lead, `/api/jobs/${techJobId}/photos`, tinyPng(), 'image/png', 'p.png')).status).toBe(403);
    const photo = await upload(tech, `/api/jobs/${techJobId}/photos`, tinyPng(), 'image/png', 'gauge.png');
    expect(photo.status, JSON.stringify(photo.body)).toBe(201);
    const list = (await lead.get(`/api/jobs/${techJobId}/photos`)).body.items;
    expect(list).toEqual([expect.objectContaining({ kind: 'photo', type: 'image/png', originalName: 'gauge.png' })]);
    expect((await leftovers()).tmp).toEqual([]);
  });

  it('refuses path-traversal and malformed file ids before they reach the file system', async () => {
    for (const id of ['..%2F..%2Fetc%2Fpasswd', '..%2Fsession-secret', '%2E%2E', 'a'.repeat(63), 'A'.repeat(64), `${'0'.repeat(64)}.json`]) {
      const r = await auditor.get(`/api/files/${id}`);
      expect([400, 404], id).toContain(r.status);
      expect(JSON.stringify(r.body)).not.toMatch(/root:|BEGIN/);
    }
    expect((await auditor.get(`/api/files/${'0'.repeat(64)}`)).status).toBe(404);
  });
});
