/**
 * Helpers of `perf/bench.bench.ts`: pseudo-terminal pairs (socat), line writers, sign-in and
 * WebSocket clients, an in-memory app, a raw PGlite baseline, a synthetic-bench driver and a
 * reviewer client in a child process.
 */
import { spawn, type ChildProcess } from 'node:child_process';
import fs from 'node:fs';
import os from 'node:os';
import { monitorEventLoopDelay, PerformanceObserver } from 'node:perf_hooks';
import path from 'node:path';
import { PGlite } from '@electric-sql/pglite';
import { SerialPort } from 'serialport';
import WebSocket from 'ws';
import { boot, type Running } from '../server/boot';
import { parseEnv } from '../server/env';
import { createLogger } from '../server/logger';
import type { StreamMessage } from '../shared/schemas/stream';
import { findSocat } from '../simulators/pty-sim';

export const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));
export const tmp = () => fs.mkdtempSync(path.join(os.tmpdir(), 'stillpoint-bench-'));

export function pct(values: number[], p: number): number {
  if (!values.length) return NaN;
  const s = [...values].sort((a, b) => a - b);
  return s[Math.min(s.length - 1, Math.max(0, Math.ceil((p / 100) * s.length) - 1))]!;
}

export async function socatPair(dir: string, name: string): Promise<{ a: string; b: string; child: ChildProcess }> {
  const socat = await findSocat();
  if (!socat) throw new Error('socat is not installed (apt-get install socat)');
  const a = path.join(dir, `${name}-a`);
  const b = path.join(dir, `${name}-b`);
  const child = spawn(socat, [`pty,raw,echo=0,link=${a}`, `pty,raw,echo=0,link=${b}`], { stdio: 'ignore' });
  for (let i = 0; i < 250 && !(fs.existsSync(a) && fs.existsSync(b)); i++) await sleep(20);
  if (!fs.existsSync(a)) throw new Error('socat did not create its links');
  return { a, b, child };
}

export async function openWriter(p: string): Promise<SerialPort> {
  const port = new SerialPort({ path: p, baudRate: 115200, autoOpen: false });
  await new Promise<void>((res, rej) => port.open((e) => (e ? rej(e) : res())));
  return port;
}

/**
 * Writes `count` numbered calibrator lines at `rateHz` at a pty and returns the time each line's
 * last byte was handed to the pty (write drained), by number.
 */
export async function writeLines(port: SerialPort, count: number, rateHz: number, from = 1): Promise<Map<number, number>> {
  const sentAt = new Map<number, number>();
  for (let i = from; i < from + count; i++) {
    const line = `DP +${(i / 1000).toFixed(5)} inH2O@68F\r\n`;
    await new Promise<void>((res) => port.write(line, () => port.drain(() => res())));
    sentAt.set(i, performance.now());
    await sleep(1000 / rateHz);
  }
  return sentAt;
}

export async function signIn(url: string, email: string): Promise<string> {
  const res = await fetch(`${url}/api/auth/login`, {
    method: 'POST',
    headers: { 'content-type': 'application/json', origin: url },
    body: JSON.stringify({ email, password: 'stillpoint-demo' }),
  });
  return res.headers.getSetCookie().find((c) => c.startsWith('sp_session='))!.split(';')[0]!;
}

export function wsClient(url: string, cookie: string, onMessage: (m: StreamMessage, at: number) => void): Promise<WebSocket> {
  const ws = new WebSocket(`${url.replace('http', 'ws')}/ws`, { headers: { cookie, origin: url } });
  ws.on('message', (d) => onMessage(JSON.parse(String(d)) as StreamMessage, performance.now()));
  return new Promise((res, rej) => {
    ws.once('open', () => res(ws));
    ws.once('error', rej);
  });
}

export async function bootApp(bench: Parameters<typeof boot>[0]['bench'], env: Record<string, string> = {}): Promise<Running> {
  const e = parseEnv({ NODE_ENV: 'test', PORT: '0', HOST: '127.0.0.1', LOG_LEVEL: 'silent', DATA_DIR: '.tmp/unused', ...env });
  return boot({ env: e, logger: createLogger('silent'), memory: true, journalDir: bench?.journalDir, bench });
}

/** Migrations applied by hand to a raw PGlite (the baseline has no drizzle). */
export async function rawPglite(): Promise<PGlite> {
  const db = new PGlite();
  await db.waitReady;
  const mig = path.resolve(import.meta.dirname, '../drizzle');
  for (const f of fs.readdirSync(mig).filter((x) => x.endsWith('.sql')).sort()) {
    for (const stmt of fs.readFileSync(path.join(mig, f), 'utf8').split('--> statement-breakpoint')) if (stmt.trim()) await db.exec(stmt);
  }
  return db;
}

/** Drives `benches` synthetic benches (2 devices × 10/s) for `ms` and returns hub → ws latencies. */
export async function drive(
  app: Running,
  cookie: string,
  benches: number,
  ms: number,
  during?: () => Promise<void>,
): Promise<{ lat: number[]; offered: number; loopP99: number; gcMaxMs: number; gcTotalMs: number }> {
  const loop = monitorEventLoopDelay({ resolution: 1 });
  let gcMaxMs = 0;
  let gcTotalMs = 0;
  const gcKinds = new Map<number, number>();
  const gcObs = new PerformanceObserver((list) => {
    for (const e of list.getEntries()) {
      gcMaxMs = Math.max(gcMaxMs, e.duration);
      gcTotalMs += e.duration;
      const kind = ((e as PerformanceEntry & { detail?: { kind?: number } }).detail?.kind) ?? 0;
      gcKinds.set(kind, (gcKinds.get(kind) ?? 0) + e.duration);
    }
  });
  gcObs.observe({ entryTypes: ['gc'] });
  loop.enable();
  const ingestAt = new Map<number, number>();
  const lat: number[] = [];
  const ws = await wsClient(app.url, cookie, (m, at) => {
    if (m.type !== 'sample.received') return;
    const t = ingestAt.get(m.seq);
    if (t !== undefined) {
      lat.push(at - t);
      ingestAt.delete(m.seq);
    }
  });
  const hub = app.bench.hub;
  const perTick = (benches * 20) / 100; // samples per 10 ms
  let carry = 0;
  let offered = 0;
  let b = 0;
  const end = performance.now() + ms;
  const heavy = during?.();
  while (performance.now() < end) {
    carry += perTick;
    while (carry >= 1) {
      carry--;
      const device = offered & 1 ? 'current' : 'pressure';
      const e = hub.ingestSample({
        benchId: `sim-${b++ % benches}`,
        device,
        raw: device === 'current' ? '+1.20000000E-02' : 'DP +50.00000 inH2O@68F',
        value: device === 'current' ? 12 : 50,
        unit: device === 'current' ? 'mA' : 'inH2O@68F',
      });
      ingestAt.set(e.seq, performance.now());
      offered++;
    }
    await sleep(10);
  }
  await heavy;
  await sleep(300);
  loop.disable();
  gcObs.disconnect();
  if (process.env.BENCH_DEBUG) process.stderr.write(`gc by kind (1 minor, 2 major, 4 incremental, 8 weakcb): ${JSON.stringify([...gcKinds])}\n`);
  ws.terminate();
  return { lat, offered, loopP99: loop.percentile(99) / 1e6, gcMaxMs, gcTotalMs };
}

/**
 * Requests `url` again and again for `ms` from a child process (reading and discarding each body)
 * and returns how many requests completed and their total time.
 */
export async function reviewClient(url: string, cookie: string, ms: number): Promise<{ queries: number; totalMs: number }> {
  const script = `
    const [url, cookie, ms] = process.argv.slice(1);
    (async () => {
      const end = performance.now() + Number(ms);
      let queries = 0, totalMs = 0;
      while (performance.now() < end) {
        const t = performance.now();
        const r = await fetch(url, { headers: { cookie } });
        if (r.status !== 200) throw new Error('trace request: ' + r.status);
        for await (const _ of r.body) {}
        totalMs += performance.now() - t;
        queries++;
      }
      process.stdout.write(JSON.stringify({ queries, totalMs }));
    })().catch((e) => { console.error(e); process.exit(1); });`;
  const child = spawn(process.execPath, ['-e', script, url, cookie, String(ms)], { stdio: ['ignore', 'pipe', 'inherit'] });
  // The reviewer's browser stands for another machine; on this one it must not take the server's
  // CPU, so it runs at the lowest priority (it still gets every idle cycle).
  try {
    os.setPriority(child.pid!, 19);
  } catch {
    // not allowed here: it then competes as an equal
  }
  let out = '';
  child.stdout!.on('data', (d: Buffer) => (out += d.toString()));
  const code = await new Promise<number | null>((r) => child.on('exit', r));
  if (code !== 0) throw new Error(`review client exited with ${code}`);
  return JSON.parse(out) as { queries: number; totalMs: number };
}
