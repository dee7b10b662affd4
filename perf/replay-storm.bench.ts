/**
 * Replay storm (issue 11, finding 5): `/api/health` response time while 100 sockets resume at
 * once, against the same server idle. The server is the production process (the prebuilt bundle of
 * server/main.ts, PGlite in a temporary DATA_DIR, simulated bench); the sockets and the health
 * requests come from this process. Ten invited accounts hold ten sockets each (the per-account
 * limit), so every socket is served. Two storms:
 *  1. every socket resumes from seq 0 (what the finding did);
 *  2. every socket resumes from 18 000 back (just under the 20 000 one replay serves, or the whole
 *     history when the server has numbered fewer), about the heaviest resume the bounds allow.
 * Health is asked one request at a time during each storm (and for at most 60 s); the target is a
 * p99 no more than twice the idle p99.
 * Run: `npx tsx perf/replay-storm.bench.ts`, or `npm run bench -- replay`.
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { Worker } from 'node:worker_threads';
import WebSocket from 'ws';
import type { StreamMessage } from '../shared/schemas/stream';
import { percentile as pct } from '../tests/helpers/proof-helpers';
import { randomPort, startServerProcess, waitHealthy } from '../tests/helpers/proof-process';
import { isMainModule, type BenchFigure } from './figure';

const SOCKETS = 100;
const ACCOUNTS = 10;
const MAX_REPLAY = 20_000;
const IDLE_REQUESTS = 300;
const STORM_CAP_MS = 60_000;
const PASSWORD = 'violet-harbour-71';
const NEXT_PASSWORD = 'amber-lantern-meadow-58';

async function signIn(base: string, email: string, password: string): Promise<string> {
  const res = await fetch(`${base}/api/auth/login`, {
    method: 'POST',
    headers: { 'content-type': 'application/json', origin: base },
    body: JSON.stringify({ email, password }),
  });
  if (!res.ok) throw new Error(`sign-in ${email}: ${res.status}`);
  return res.headers.getSetCookie().find((c) => c.startsWith('sp_session='))!.split(';')[0]!;
}

async function healthMs(base: string): Promise<number> {
  const t = performance.now();
  const r = await fetch(`${base}/api/health`);
  await r.arrayBuffer();
  if (!r.ok) throw new Error(`health answered ${r.status}`);
  return performance.now() - t;
}

/** The stream's first message (epoch and latest seq). */
function opened(base: string, cookie: string): Promise<Extract<StreamMessage, { type: 'stream.opened' }>> {
  return new Promise((resolve, reject) => {
    const ws = new WebSocket(`${base.replace('http', 'ws')}/ws`, { headers: { cookie, origin: base } });
    ws.once('message', (d) => {
      ws.terminate();
      resolve(JSON.parse(String(d)));
    });
    ws.once('error', reject);
  });
}

interface StormResult {
  since: number;
  latest: number;
  health: number[];
  served: number;
  refused: number;
  resets: number;
  caughtUp: number;
  replayed: number;
  seconds: number;
}

/**
 * The storm's sockets live in a worker thread (plain JavaScript, `ws` from this package), so that
 * parsing 100 replays does not delay this thread's health timings: only the server is measured.
 */
const STORM_WORKER = `
const { parentPort, workerData } = require('node:worker_threads');
const WebSocket = require('ws');
const { url, cookies, origin, latest, sockets } = workerData;
const views = Array.from({ length: sockets }, (_, i) => {
  const ws = new WebSocket(url, { headers: { cookie: cookies[i % cookies.length], origin } });
  const v = { ws, count: 0, reset: false, done: false, closed: false };
  ws.on('message', (d) => {
    const m = JSON.parse(String(d));
    if (m.type === 'stream.reset') v.reset = v.done = true;
    else if (m.type !== 'stream.opened' && m.seq <= latest) v.count++;
    if (m.seq >= latest && m.type !== 'stream.opened') v.done = true;
  });
  ws.on('close', () => (v.closed = true));
  ws.on('error', () => {});
  return v;
});
const summary = () => ({
  finished: views.every((v) => v.done || v.closed),
  served: views.filter((v) => !v.closed).length,
  refused: views.filter((v) => v.closed).length,
  resets: views.filter((v) => v.reset).length,
  caughtUp: views.filter((v) => v.done && !v.reset).length,
  replayed: views.reduce((n, v) => n + v.count, 0),
});
const timer = setInterval(() => parentPort.postMessage(summary()), 50);
parentPort.on('message', () => {
  clearInterval(timer);
  const last = summary();
  for (const v of views) v.ws.terminate();
  parentPort.postMessage({ ...last, final: true });
  parentPort.close();
});
`;

type StormSummary = Omit<StormResult, 'since' | 'latest' | 'health' | 'seconds'> & { finished: boolean; final?: boolean };

/** Opens the sockets resuming from `since` and asks health one request at a time until they catch up (or the cap). */
async function storm(base: string, cookies: string[], epoch: string, since: number, latest: number): Promise<StormResult> {
  const t0 = performance.now();
  const worker = new Worker(STORM_WORKER, {
    eval: true,
    workerData: { url: `${base.replace('http', 'ws')}/ws?since=${since}&epoch=${epoch}`, cookies, origin: base, latest, sockets: SOCKETS },
  });
  let last: StormSummary = { finished: false, served: 0, refused: 0, resets: 0, caughtUp: 0, replayed: 0 };
  worker.on('message', (m: StormSummary) => (last = m));
  const health: number[] = [];
  while (!last.finished && performance.now() - t0 < STORM_CAP_MS) health.push(await healthMs(base));
  const seconds = (performance.now() - t0) / 1000;
  const final = new Promise<StormSummary>((resolve) => worker.on('message', (m: StormSummary) => m.final && resolve(m)));
  worker.postMessage('stop');
  const { finished: _f, final: _x, ...counts } = await final;
  await worker.terminate();
  return { since, latest, health, seconds, ...counts };
}

export async function run(): Promise<BenchFigure[]> {
  const dataDir = fs.mkdtempSync(path.join(os.tmpdir(), 'stillpoint-replay-storm-'));
  const s = await startServerProcess({ dataDir, port: await randomPort(), env: { LOG_LEVEL: 'error' } });
  try {
    await waitHealthy(s, 600_000);
    const base = s.base;
    const admin = await signIn(base, 'admin@stillpoint-demo.test', 'stillpoint-demo');
    const cookies: string[] = [];
    for (let i = 1; i <= ACCOUNTS; i++) {
      const email = `storm-${i}@stillpoint-demo.test`;
      const r = await fetch(`${base}/api/users`, {
        method: 'POST',
        headers: { 'content-type': 'application/json', origin: base, cookie: admin },
        body: JSON.stringify({ email, name: `Storm Viewer ${i}`, role: 'auditor', password: PASSWORD }),
      });
      if (r.status !== 201) throw new Error(`invite ${email}: ${r.status} ${await r.text()}`);
      // An invited account must choose its own password before it may open the stream.
      const first = await signIn(base, email, PASSWORD);
      const changed = await fetch(`${base}/api/auth/password`, {
        method: 'POST',
        headers: { 'content-type': 'application/json', origin: base, cookie: first },
        body: JSON.stringify({ current: PASSWORD, next: NEXT_PASSWORD }),
      });
      if (!changed.ok) throw new Error(`password change ${email}: ${changed.status} ${await changed.text()}`);
      cookies.push(await signIn(base, email, NEXT_PASSWORD));
    }
    const first = await opened(base, admin);
    for (let i = 0; i < 20; i++) await healthMs(base); // warm up
    const idle: number[] = [];
    for (let i = 0; i < IDLE_REQUESTS; i++) idle.push(await healthMs(base));

    const fromZero = await storm(base, cookies, first.epoch, 0, (await opened(base, admin)).latestSeq);
    const latest = (await opened(base, admin)).latestSeq;
    // A margin under the bound: the bench goes on numbering while the 100 sockets open.
    const deepest = await storm(base, cookies, first.epoch, Math.max(0, latest - (MAX_REPLAY - 2000)), latest);

    const idleP99 = pct(idle, 99);
    const fig = (r: StormResult, label: string): BenchFigure[] => {
      const p99 = pct(r.health, 99);
      return [
        {
          name: `replay storm (${label}): /api/health p99 during it (${r.health.length} requests; idle p99 ${idleP99.toFixed(1)} ms)`,
          value: p99,
          unit: 'ms',
          target: `<= 2x idle (${(2 * idleP99).toFixed(1)} ms)`,
          ok: p99 <= 2 * idleP99,
        },
        { name: `replay storm (${label}): ratio to idle p99`, value: p99 / idleP99, unit: 'x', target: '<= 2', ok: p99 <= 2 * idleP99 },
        { name: `replay storm (${label}): health p50 / max`, value: pct(r.health, 50), unit: `ms / ${pct(r.health, 100).toFixed(1)} ms` },
        {
          name: `replay storm (${label}): sockets served / caught up / reset / refused; messages replayed`,
          value: r.served,
          // A storm whose sockets were refused measures nothing: every socket must be served.
          target: `${SOCKETS} served`,
          ok: r.served === SOCKETS,
          unit: `/ ${r.caughtUp} / ${r.resets} / ${r.refused}; ${r.replayed} replayed in ${r.seconds.toFixed(1)} s (since ${r.since}, latest ${r.latest})`,
        },
      ];
    };
    return [{ name: 'replay storm: /api/health p99 idle', value: idleP99, unit: 'ms' }, ...fig(fromZero, 'from seq 0'), ...fig(deepest, `from ${MAX_REPLAY - 2000} back`)];
  } finally {
    s.child.kill('SIGTERM');
    await s.exited;
    fs.rmSync(dataDir, { recursive: true, force: true });
  }
}

if (isMainModule(import.meta.url)) {
  console.table(await run());
  process.exit(0);
}
