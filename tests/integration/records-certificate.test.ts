import { spawnSync } from 'node:child_process';
import fs from 'node:fs/promises';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { ApiClient, demoEmail, startTestServer, type TestServer } from '../helpers/test-server';
import { ensurePoppler } from '../helpers/poppler';

function run(cmd: string, args: string[]): string {
  const r = spawnSync(cmd, args, { encoding: 'utf8' });
  if (r.status !== 0) throw new Error(`${cmd} failed: ${r.stderr}`);
  return r.stdout;
}

/** A value as the certificate prints it: the one sign rule of shared/format (U+2212, + when signed, no signed zero). */
function printed(n: number, decimals: number, signed = false): string {
  const s = n.toFixed(decimals).replace(/^-/, '\u2212');
  const clean = /^\u22120\.?0*$/.test(s) ? s.slice(1) : s;
  return signed && !clean.startsWith('\u2212') && !/^0\.?0*$/.test(clean) ? `+${clean}` : clean;
}

let srv: TestServer;
let auditor: ApiClient;
let dir: string;

beforeAll(async () => {
  ensurePoppler();
  srv = await startTestServer();
  auditor = new ApiClient(srv.url);
  await auditor.login(demoEmail('auditor'));
  dir = await fs.mkdtemp(path.join(os.tmpdir(), 'stillpoint-cert-int-'));
}, 180_000);
afterAll(async () => {
  await srv?.close();
  if (dir) await fs.rm(dir, { recursive: true, force: true });
});

interface RunPoint {
  measuredMa: number;
  errorPctSpan: number;
}

describe('GET /api/jobs/:id/certificate.pdf', () => {
  it('renders an approved demo job with embedded fonts and the as-found and as-left values stored for its runs', async () => {
    const approved = (await auditor.get('/api/records?status=approved')).body.items as Array<{ id: string; tag: string }>;
    const details = await Promise.all(approved.map(async (r) => (await auditor.get(`/api/jobs/${r.id}`)).body as { id: string; runs: Array<{ id: string; kind: string }> }));
    const job = details.find((j) => j.runs.some((r) => r.kind === 'as-left'));
    expect(job, 'an approved demo job with an as-left run').toBeDefined();

    const res = await fetch(`${srv.url}/api/jobs/${job!.id}/certificate.pdf`, { headers: { cookie: auditor.cookie } });
    expect(res.status).toBe(200);
    expect(res.headers.get('content-type')).toBe('application/pdf');
    const pdf = Buffer.from(await res.arrayBuffer());
    expect(pdf.subarray(0, 5).toString('latin1')).toBe('%PDF-');
    const file = path.join(dir, 'cert.pdf');
    await fs.writeFile(file, pdf);

    expect(run('pdfinfo', [file])).toMatch(/Pages:\s+[1-9]/);
    const fonts = run('pdffonts', [file]).split('\n').slice(2).filter(Boolean);
    expect(fonts.length).toBeGreaterThan(0);
    // Every font is embedded (the "emb" column).
    for (const line of fonts) expect(line).toMatch(/\s(yes)\s+(yes|no)\s+(yes|no)\s+\d+\s+\d+\s*$/);

    const text = run('pdftotext', [file, '-']).replace(/\s+/g, ' ');
    expect(text).not.toMatch(/DRAFT/);
    for (const kind of ['as-found', 'as-left'] as const) {
      const runId = job!.runs.find((r) => r.kind === kind)!.id;
      const stored = (await auditor.get(`/api/runs/${runId}`)).body as { results: { points: RunPoint[] } };
      expect(stored.results.points.length).toBe(9);
      for (const p of stored.results.points) {
        expect(text).toContain(printed(p.measuredMa, 4));
        expect(text).toContain(printed(p.errorPctSpan, 3, true));
      }
    }
  }, 120_000);

  it('marks a job not yet approved as a draft, and needs a signed-in user', async () => {
    const waiting = (await auditor.get('/api/records?status=submitted')).body.items.find((r: { tag: string }) => r.tag === 'PT-302');
    const res = await fetch(`${srv.url}/api/jobs/${waiting.id}/certificate.pdf`, { headers: { cookie: auditor.cookie } });
    expect(res.status).toBe(200);
    const file = path.join(dir, 'draft.pdf');
    await fs.writeFile(file, Buffer.from(await res.arrayBuffer()));
    expect(run('pdftotext', [file, '-'])).toMatch(/draft/i);
    expect((await fetch(`${srv.url}/api/jobs/${waiting.id}/certificate.pdf`)).status).toBe(401);
  }, 120_000);
});
