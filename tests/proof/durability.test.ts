/**
 * Durability: the real server process (the prebuilt bundle of server/main.ts, production mode,
 * simulated bench, 1 s hold) is killed with SIGKILL at random moments while the sim autopilot
 * drives a capture, and started again on the same data directory. Each time:
 * - the database opens (health answers, within a minute);
 * - every sample acknowledged before the kill (`GET /api/bench` → `ackedSeq`, read just before the
 *   kill) that the live stream had shown is stored, with the same raw line;
 * - every point `GET /api/runs/:id` showed as captured before the kill is still captured, with the
 *   same values;
 * - a second process on the same data directory is refused (PGlite; every tenth round).
 *
 * `PROOF_KILLS` (PROOF_LEVEL=full: 50, or 15 on a PostgreSQL server; the short pass of `npm test`: 5, or 3) sets the rounds, `PROOF_KILL_SEED` replays the
 * kill moments. On a PostgreSQL server (TEST_DATABASE_URL) each run gets a fresh database.
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import WebSocket from 'ws';
import { ApiClient, demoEmail } from '../helpers/test-server';
import { prepareFt101, recordSummary, sleep } from '../helpers/proof-helpers';
import { proofCount } from '../helpers/proof-level';
import { freshPostgresUrl, randomPort, startHealthy, startServerProcess, type ServerProcess } from '../helpers/proof-process';
import { seededRng } from '../../shared/random';

const PG_ADMIN = process.env.TEST_DATABASE_URL;
const KILLS = PG_ADMIN ? proofCount('PROOF_KILLS', 3, 15) : proofCount('PROOF_KILLS', 5, 50);
const SEED = Number(process.env.PROOF_KILL_SEED ?? Date.now() % 2 ** 31);
const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'sp-durability-'));
const children: ServerProcess[] = [];
let pgdb: Awaited<ReturnType<typeof freshPostgresUrl>>;

async function startServer(port: number, databaseUrl: string | undefined): Promise<ServerProcess> {
  const s = await startServerProcess({ port, dataDir: dir, databaseUrl });
  children.push(s);
  return s;
}

/** Collects sample.received messages from /ws: seq → raw line. */
function watchStream(base: string, cookie: string) {
  const seen = new Map<number, { raw: string; device: string }>();
  let maxSeq = 0;
  const ws = new WebSocket(`${base.replace('http', 'ws')}/ws`, { headers: { cookie, origin: base } });
  ws.on('message', (d) => {
    const m = JSON.parse(String(d)) as { type: string; seq: number; raw?: string; device?: string };
    if (m.seq > maxSeq) maxSeq = m.seq;
    if (m.type === 'sample.received') seen.set(m.seq, { raw: m.raw!, device: m.device! });
  });
  ws.on('error', () => {});
  const opened = new Promise<void>((resolve, reject) => {
    ws.once('message', () => resolve());
    ws.once('unexpected-response', (_q, res) => reject(new Error(`ws refused: ${res.statusCode}`)));
  });
  return { seen, opened, maxSeq: () => maxSeq, close: () => ws.terminate() };
}

type Capture = Record<string, unknown>;

afterAll(async () => {
  for (const c of children) if (c.child.exitCode === null && c.child.signalCode === null) c.child.kill('SIGKILL');
  await Promise.all(children.map((c) => c.exited));
  fs.rmSync(dir, { recursive: true, force: true });
  await pgdb?.drop();
});

describe('durability under SIGKILL during capture', () => {
  it(`survives ${KILLS} kills at random moments with every acknowledged sample and captured point`, { timeout: 2_700_000 }, async () => {
    // Seeded (shared/random.ts) so a failing run can be replayed with PROOF_KILL_SEED.
    const random = seededRng(SEED);
    pgdb = await freshPostgresUrl('sp_dur');
    const databaseUrl = pgdb?.url;
    const t0 = Date.now();
    let tech = '';
    let admin = '';
    let jobId = '';
    /** Captured points seen before kills: runId → index → capture. */
    const captured = new Map<string, Map<number, Capture>>();
    let lastRunId = '';
    /** Samples seen acknowledged before the last kill, not yet checked. */
    let expectSamples = new Map<number, { raw: string; device: string }>();
    const figures = { kills: 0, samplesChecked: 0, pointsChecked: 0, maxAcked: 0, secondProcessRefused: 0, bootMs: [] as number[], replayed: 0, capturesSeen: 0 };

    for (let round = 0; round <= KILLS; round++) {
      const bootStart = Date.now();
      const s = await startHealthy({ dataDir: dir, databaseUrl }, (p) => children.push(p));
      const port = s.port;
      figures.bootMs.push(Date.now() - bootStart);
      const base = `http://127.0.0.1:${port}`;
      const t = new ApiClient(base);
      const a = new ApiClient(base);
      // Sessions live in the database: the cookies of the first round must still work after every restart.
      t.cookie = tech;
      a.cookie = admin;
      if (!tech) {
        await t.login(demoEmail('tech'));
        await a.login(demoEmail('admin'));
        tech = t.cookie;
        admin = a.cookie;
        jobId = await prepareFt101(t);
      }
      expect((await t.get('/api/auth/me')).status, `round ${round}: session survives restart`).toBe(200);

      // --- Check what the previous round saw before its kill.
      if (expectSamples.size) {
        const seqs = [...expectSamples.keys()].sort((x, y) => x - y);
        const stored = new Map<number, { raw: string; device: string }>();
        let after = seqs[0]! - 1;
        for (;;) {
          const page = (await t.get(`/api/bench/samples?after=${after}&limit=100000`)).body.items as { seq: number; raw: string; device: string }[];
          for (const r of page) stored.set(r.seq, r);
          if (page.length < 100_000 || page[page.length - 1]!.seq >= seqs[seqs.length - 1]!) break;
          after = page[page.length - 1]!.seq;
        }
        const missing = seqs.filter((q) => stored.get(q)?.raw !== expectSamples.get(q)!.raw);
        expect(missing, `round ${round}: acknowledged samples missing or changed after the kill (of ${seqs.length})`).toEqual([]);
        figures.samplesChecked += seqs.length;
        expectSamples = new Map();
      }
      // Points captured before the previous kill, and at the end every point captured in any round.
      for (const [runId, points] of round === KILLS ? captured : [...captured].filter(([id]) => id === lastRunId)) {
        const run = (await t.get(`/api/runs/${runId}`)).body as { points: { index: number; state: string; capture: Capture | null }[] };
        for (const [index, cap] of points) {
          const p = run.points[index]!;
          expect(p.state, `round ${round}: run ${runId} point ${index} was captured before the kill`).toBe('captured');
          expect(p.capture, `round ${round}: run ${runId} point ${index} capture values`).toEqual(cap);
          figures.pointsChecked++;
        }
      }
      const status = (await t.get('/api/bench')).body as { writer: { replayed: number }; benches: { activeRunId: string | null }[] };
      figures.replayed += status.writer.replayed;
      if (round === KILLS) {
        // The last restart only verifies; then a clean stop must exit 0 and release the lock.
        s.child.kill('SIGTERM');
        expect(await s.exited).toBe(0);
        if (!databaseUrl) expect(fs.existsSync(path.join(dir, 'stillpoint.lock'))).toBe(false);
        break;
      }

      // --- A fresh run under the autopilot (a run restored after the kill is aborted first).
      for (const b of status.benches) if (b.activeRunId) await t.post(`/api/runs/${b.activeRunId}/abort`);
      const run = await t.post(`/api/jobs/${jobId}/runs`, { kind: 'as-found' });
      expect(run.status, `round ${round}: start run ${JSON.stringify(run.body)}`).toBe(201);
      const runId = run.body.id as string;
      lastRunId = runId;
      const sim = await a.post('/api/sim', { autopilot: { speed: 6, holdSeconds: 1.8 } });
      expect(sim.status, JSON.stringify(sim.body)).toBe(200);
      const stream = watchStream(base, tech);
      await stream.opened;

      if (!databaseUrl && round % 10 === 0) {
        const second = await startServer(await randomPort(), undefined);
        expect(await second.exited, `round ${round}: second process on the same DATA_DIR`).toBe(3);
        expect(second.output()).toContain('in use by another Stillpoint process');
        figures.secondProcessRefused++;
      }

      // --- Let the capture run a random while, read what is acknowledged and captured, and kill.
      await sleep(500 + random() * 4_500);
      const bench = (await t.get('/api/bench')).body as { ackedSeq: number };
      const acked = bench.ackedSeq;
      for (let i = 0; i < 50 && stream.maxSeq() < acked; i++) await sleep(10);
      const before = (await t.get(`/api/runs/${runId}`)).body as { points: { index: number; state: string; capture: Capture | null }[] };
      s.child.kill('SIGKILL');
      expect(await s.exited).toBe(-1);
      stream.close();
      figures.kills++;
      figures.maxAcked = Math.max(figures.maxAcked, acked);
      for (const [seq, v] of stream.seen) if (seq <= acked) expectSamples.set(seq, v);
      const caps = new Map<number, Capture>();
      for (const p of before.points) if (p.state === 'captured' && p.capture) caps.set(p.index, p.capture);
      if (caps.size) captured.set(runId, caps);
      figures.capturesSeen += caps.size;
      if (round % 10 === 9) console.log(`durability: ${figures.kills} kills survived in ${((Date.now() - t0) / 60_000).toFixed(1)} min`);
    }

    const minutes = (Date.now() - t0) / 60_000;
    const bootSorted = [...figures.bootMs].sort((x, y) => x - y);
    const summary = {
      kills: figures.kills,
      samplesChecked: figures.samplesChecked,
      pointsChecked: figures.pointsChecked,
      capturedPointsSeen: figures.capturesSeen,
      journalRowsReplayed: figures.replayed,
      secondProcessRefused: figures.secondProcessRefused,
      medianBootMs: bootSorted[Math.floor(bootSorted.length / 2)],
      minutes: Number(minutes.toFixed(1)),
      seed: SEED,
    };
    console.log(`durability: ${JSON.stringify(summary)}`);
    recordSummary(PG_ADMIN ? 'durabilityPostgres' : 'durability', summary);
    expect(figures.kills).toBe(KILLS);
    expect(figures.samplesChecked).toBeGreaterThan(KILLS * 5);
    expect(figures.capturesSeen).toBeGreaterThan(0);
  });
});
