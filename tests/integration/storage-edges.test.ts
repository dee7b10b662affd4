/**
 * Issue 11, acceptance 1 (findings 1 and 12) and issue 14's health check, end to end:
 * - forwarded lines with NUL, every other C0 control character, or 10 000 characters, sent over
 *   `/ws` by a signed-in technician, are refused at the edge and the writer keeps storing;
 * - a row the database refuses (injected into the hub behind the edge check) is quarantined, the
 *   samples after it are stored, and `/api/health` answers 503 (degraded writer) until a lead
 *   acknowledges it on the storage review (audited);
 * - a real server process whose journal holds a refused row starts cleanly, and after a SIGKILL
 *   while samples stream, restarts with every acknowledged sample present and the row in quarantine.
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import WebSocket from 'ws';
import { SampleJournal } from '../../server/bench/journal';
import { portRow } from './journal-helpers';
import { BenchStatusSchema } from '../../src/features/bench/api/get-bench';
import { StorageReviewSchema } from '../../src/features/bench/api/storage';
import { journalDirOf } from '../../server/services/bench.service';
import { startServerProcess, randomPort, type ServerProcess } from '../helpers/proof-process';
import { ApiClient, demoEmail, startTestServer, type TestServer } from '../helpers/test-server';
import { streamClient, until } from './runs-helpers';

/** Every C0 control character but tab (allowed) and a lone trailing CR or LF (a terminator, removed). */
const C0 = Array.from({ length: 32 }, (_, c) => c).filter((c) => c !== 0x09);

/** Opens a technician's socket and resolves once it is open. */
async function techSocket(url: string, tech: ApiClient): Promise<WebSocket> {
  const ws = new WebSocket(`${url.replace('http', 'ws')}/ws`, { headers: { cookie: tech.cookie, origin: url } });
  await new Promise<void>((resolve, reject) => {
    ws.once('open', () => resolve());
    ws.once('error', reject);
  });
  return ws;
}

/**
 * Sends the bad lines (one batch each, so one refused line never hides another) and one good line
 * last, as a browser forwarding Web Serial does: to the user's own bench, numbered batches.
 */
function sendBadLines(ws: WebSocket, marker: string, userId: string): number {
  const benchId = `browser-${userId}`;
  const senderId = `edge-${Math.random().toString(36).slice(2, 10)}`;
  let batchSeq = 0;
  const send = (raw: string, sender = senderId, seq = ++batchSeq) =>
    ws.send(JSON.stringify({ type: 'lines.forwarded', benchId, senderId: sender, batchSeq: seq, sentWallMs: Date.now(), lines: [{ device: 'current', raw, wallMs: Date.now() }] }));
  const bad = ['A\u0000B', ...C0.map((c) => `+1.2${String.fromCharCode(c)}00E-02`)];
  for (const raw of bad) send(raw);
  // 10 000 characters: within the message contract (a raw line up to 16 384), refused at the edge (256).
  send('x'.repeat(10_000));
  send(marker);
  return bad.length + 1;
}

type Stored = { seq: number; raw: string; device: string };
// eslint-disable-next-line no-control-regex
const CONTROL = /[\u0000-\u0008\u000a-\u001f]/;

describe('storage edges on one server (in-process)', () => {
  let srv: TestServer;
  let tech: ApiClient;
  let lead: ApiClient;
  beforeAll(async () => {
    srv = await startTestServer({ env: { HOLD_SECONDS: '1' } });
    tech = new ApiClient(srv.url);
    lead = new ApiClient(srv.url);
    await tech.login(demoEmail('tech'));
    await lead.login(demoEmail('lead'));
  }, 120_000);
  afterAll(async () => {
    await srv?.close();
  });

  it('refuses NUL, each C0 control and a 10 000-character line at the edge, and keeps storing later samples', async () => {
    expect((await tech.get('/api/health')).status).toBe(200);
    const ws = await techSocket(srv.url, tech);
    const from = srv.bench.hub.latestSeq;
    const marker = '+1.234567E-02';
    sendBadLines(ws, marker, (await tech.get('/api/auth/me')).body.id as string);
    // The good line sent after the bad ones is stored, and so are the local bench's samples after it.
    let after: Stored[] = [];
    await until(
      async () => {
        after = (await tech.get(`/api/bench/samples?after=${from}&limit=10000`)).body.items as Stored[];
        const m = after.find((s) => s.raw === marker);
        return !!m && after.some((s) => s.seq > m.seq);
      },
      20_000,
      'the good line and later samples stored',
    );
    expect(after.filter((s) => CONTROL.test(s.raw) || s.raw.length > 256)).toEqual([]);
    const status = (await tech.get('/api/bench')).body as { storage: { edgeRefused: number; quarantined: { total: number } } };
    // NUL, the 30 other controls and the 10 000-character line are each refused and counted at the edge.
    expect(status.storage.edgeRefused).toBe(1 + C0.length + 1);
    expect(status.storage.quarantined.total).toBe(0);
    expect((await tech.get('/api/health')).body).toMatchObject({ ok: true, status: 'ok' });
    ws.terminate();
  });

  it('quarantines a row the database refuses, answers 503 on health until a lead acknowledges it (audited)', async () => {
    const bad = srv.bench.hub.ingestSample({ benchId: 'bench-1', device: 'current', raw: 'A\u0000B', value: null, unit: null });
    await until(async () => srv.bench.writer.stats.quarantined === 1, 10_000, 'the row quarantined');
    // The samples after it are stored.
    await until(async () => srv.bench.writer.stats.storedSeq > bad.seq + 5, 10_000, 'later samples stored');
    const later = (await tech.get(`/api/bench/samples?after=${bad.seq}&limit=5`)).body.items as Stored[];
    expect(later.length).toBe(5);

    const h = await tech.get('/api/health');
    expect(h.status).toBe(503);
    expect(h.body).toMatchObject({ ok: false, status: 'degraded', writer: { ok: false, quarantined: { unacknowledged: 1 } } });
    expect((h.body.reasons as string[]).join(' ')).toMatch(/quarantined/);

    const reviewBody = (await tech.get('/api/bench/storage')).body;
    expect(StorageReviewSchema.safeParse(reviewBody).success).toBe(true); // the Bench page's contract
    expect(BenchStatusSchema.parse((await tech.get('/api/bench')).body).storage?.quarantined.unacknowledged).toBe(1);
    const review = reviewBody as { quarantine: { unacknowledged: number; items: { seq: number; reason: string; preview: string; raw: string }[] } };
    expect(review.quarantine.unacknowledged).toBe(1);
    expect(review.quarantine.items[0]).toMatchObject({ seq: bad.seq, raw: 'A\u0000B', preview: 'A\\x00B' });
    expect(review.quarantine.items[0]!.reason).toMatch(/22021/);
    expect((await tech.get('/api/bench')).body.storage.quarantined).toEqual({ total: 1, unacknowledged: 1 });

    expect((await tech.post('/api/bench/storage/acknowledge')).status).toBe(403);
    // Any body is refused with a field error and acknowledges nothing (found by the API fuzz).
    const junk = await lead.post('/api/bench/storage/acknowledge', { rows: 'all', '0': 1 });
    expect(junk.status).toBe(400);
    expect((await tech.get('/api/bench')).body.storage.quarantined).toEqual({ total: 1, unacknowledged: 1 });
    const ack = await lead.post('/api/bench/storage/acknowledge');
    expect(ack.status).toBe(200);
    expect(ack.body).toEqual({ acknowledged: { rows: 1, batches: 0 } });
    const audit = (await lead.get('/api/audit?entity=sample-storage')).body as { items: { action: string; after: { quarantinedSeqs: number[] } }[] };
    expect(audit.items.find((e) => e.action === 'storage.acknowledged')?.after.quarantinedSeqs).toEqual([bad.seq]);
    const again = await tech.get('/api/health');
    expect(again.status).toBe(200);
    expect(again.body).toMatchObject({ ok: true, status: 'ok', writer: { quarantined: { total: 1, unacknowledged: 0 } } });
  });
});

describe('storage edges across a SIGKILL (real server process)', () => {
  const dataDir = fs.mkdtempSync(path.join(os.tmpdir(), 'stillpoint-edges-'));
  const procs: ServerProcess[] = [];
  afterAll(async () => {
    for (const p of procs) if (p.child.exitCode === null) p.child.kill('SIGKILL');
    await Promise.all(procs.map((p) => p.exited));
    fs.rmSync(dataDir, { recursive: true, force: true });
  });

  /** Starts the server and waits until /api/health answers at all (503 is expected with a quarantined row). */
  async function start(): Promise<ServerProcess> {
    const s = await startServerProcess({ port: await randomPort(), dataDir });
    procs.push(s);
    await until(
      async () => {
        if (s.child.exitCode !== null) throw new Error(`server exited with ${s.child.exitCode}:\n${s.output()}`);
        try {
          return [200, 503].includes((await fetch(`${s.base}/api/health`)).status);
        } catch {
          return false;
        }
      },
      240_000, // a first start migrates and seeds the demo history: minutes on a loaded machine
      'server answering',
    );
    return s;
  }

  it('restarts after a kill with every acknowledged sample, over a journal holding a refused row (finding 1)', async () => {
    const first = await start();
    const admin = new ApiClient(first.base);
    await admin.login(demoEmail('admin'));
    const tech = new ApiClient(first.base);
    await tech.login(demoEmail('tech'));

    // Bad lines over the socket while the bench streams; then a kill mid-stream.
    const viewer = streamClient({ url: first.base }, admin);
    await viewer.opened;
    const ws = await techSocket(first.base, tech);
    sendBadLines(ws, '+1.5E-02', (await tech.get('/api/auth/me')).body.id as string);
    let acked = 0;
    await until(
      async () => {
        const firstSeen = viewer.messages.find((m) => m.type === 'sample.received')?.seq;
        acked = (await admin.get('/api/bench')).body.ackedSeq as number;
        return firstSeen !== undefined && acked > firstSeen + 40;
      },
      60_000,
      'samples acknowledged',
    );
    const status = (await admin.get('/api/bench')).body as { ackedSeq: number; latestSeq: number; storage: { edgeRefused: number } };
    acked = status.ackedSeq;
    expect(status.storage.edgeRefused).toBe(1 + C0.length + 1);
    first.child.kill('SIGKILL');
    await first.exited;
    ws.terminate();
    viewer.close();
    const mustHave = viewer.messages.filter((m) => m.type === 'sample.received' && m.seq <= acked).map((m) => m.seq);
    expect(mustHave.length).toBeGreaterThan(20);

    // The journal as the kill left it, plus an intact batch whose middle row the database refuses
    // (as an older server, without the edge check, would have journaled it): before this change
    // the start-up replay threw on that row and the server would not start.
    const base = status.latestSeq + 100_000;
    const j = new SampleJournal(journalDirOf(dataDir));
    await j.open();
    const row = (seq: number, raw: string) => portRow(seq, raw, Date.now());
    await j.append([row(base, '+1.0E-02'), row(base + 1, 'A\u0000B'), row(base + 2, '+1.1E-02')]);
    await j.close();

    const second = await start();
    const lead = new ApiClient(second.base);
    await lead.login(demoEmail('lead'));
    const stored = new Map<number, Stored>();
    for (let after = 0; ; ) {
      const page = (await lead.get(`/api/bench/samples?after=${after}&limit=10000`)).body.items as Stored[];
      if (!page.length) break;
      for (const s of page) stored.set(s.seq, s);
      after = page.at(-1)!.seq;
      if (after >= base + 2) break;
    }
    expect(mustHave.filter((s) => !stored.has(s))).toEqual([]);
    expect([stored.has(base), stored.has(base + 1), stored.has(base + 2)]).toEqual([true, false, true]);
    expect([...stored.values()].filter((s) => CONTROL.test(s.raw))).toEqual([]);
    const review = (await lead.get('/api/bench/storage')).body as { quarantine: { items: { seq: number; raw: string }[] } };
    expect(review.quarantine.items.map((q) => [q.seq, q.raw])).toEqual([[base + 1, 'A\u0000B']]);
    // Numbering continues after the quarantined rows too: no seq names two samples.
    expect(((await lead.get('/api/bench')).body as { latestSeq: number }).latestSeq).toBeGreaterThan(base + 2);
    // 503 (degraded writer) until reviewed; then healthy, with the database, journal and disk reported.
    const health = await lead.get('/api/health');
    expect(health.status).toBe(503);
    expect(health.body).toMatchObject({ ok: false, status: 'degraded', writer: { quarantined: { unacknowledged: 1 } } });
    expect((await lead.post('/api/bench/storage/acknowledge')).status).toBe(200);
    const ok = await lead.get('/api/health');
    expect(ok.status).toBe(200);
    expect(ok.body).toMatchObject({ ok: true, database: { ok: true }, journal: { enabled: true, writable: true }, disk: { ok: true } });
    second.child.kill('SIGTERM');
    await second.exited;
  }, 600_000);
});
