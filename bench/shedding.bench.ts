/**
 * Load shedding figures: one production server process (its own process, as in the load proof)
 * with a capture running under the sim autopilot and a live viewer, driven with open-loop mixed
 * API traffic (the load proof's mix) at rising rates. For each rate: the p99 of the requests that
 * were served, and the share shed with 503 + Retry-After; then the rate at which shedding starts
 * (first rate shedding more than 1 %), and whether any sample of the capture was lost (streamed to
 * the viewer but not stored). Targets (issue 14): p99 of the served requests at 200 req/s under
 * 200 ms, no capture lost.
 *
 * `BENCH_SHED_SECONDS` (default 15 per rate), `BENCH_SHED_RATES` (default 100,150,200,250,300) and
 * `BENCH_SHED_MAX_IN_FLIGHT` (default: the server's MAX_IN_FLIGHT default) scale it.
 * Run: `npm run bench -- shedding`, or `npx tsx bench/shedding.bench.ts`.
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import WebSocket from 'ws';
import { EvaluateBodySchema } from '../shared/schemas/calc';
import { ApiClient, demoEmail } from '../tests/helpers/test-server';
import { percentile, prepareFt101, sleep } from '../tests/helpers/proof-helpers';
import { startHealthy } from '../tests/helpers/proof-process';
import { isMainModule, type BenchFigure } from './figure';

const SECONDS = Number(process.env.BENCH_SHED_SECONDS ?? 15);
const RATES = (process.env.BENCH_SHED_RATES ?? '100,150,200,250,300').split(',').map(Number);
const P99_TARGET_MS = 200;
const SHED_ONSET = 0.01;

const evaluateBody = EvaluateBodySchema.parse({
  instrument: { lrv: 0, urv: 25, unit: 'kPa', outputMode: 'sqrt-transmitter', cutoffMode: 'none', tolerancePctSpan: 0.5 },
  standards: { pressure: { kind: 'spec', unit: 'kPa', pctOfReading: 0.02, pctOfFullScale: 0.01, fullScale: 100 }, current: { pctOfReading: 0.01, floorMa: 0.001 } },
  decisionRule: 'guard-band',
  readings: [10, 25, 50, 75, 100].map((f) => ({ nominalPct: f, basis: 'flow', direction: 'up', appliedDp: 25 * (f / 100) ** 2, measuredMa: 4 + 0.16 * f + 0.002, n: 30 })),
});

interface Step {
  rate: number;
  sent: number;
  served: number;
  shed: number;
  failed: number;
  p50: number;
  p99: number;
}

export async function run(): Promise<BenchFigure[]> {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'sp-shed-'));
  const env: Record<string, string> = { DATABASE_URL: '' };
  if (process.env.BENCH_SHED_MAX_IN_FLIGHT) env.MAX_IN_FLIGHT = process.env.BENCH_SHED_MAX_IN_FLIGHT;
  const server = await startHealthy({ dataDir: dir, env });
  try {
    const base = server.base;
    const who = { tech: new ApiClient(base), lead: new ApiClient(base), admin: new ApiClient(base), auditor: new ApiClient(base) };
    for (const [k, c] of Object.entries(who)) await c.login(demoEmail(k as keyof typeof who));
    const jobId = await prepareFt101(who.tech);
    const runIds: string[] = [];
    const startRun = async () => {
      const r = await who.tech.post(`/api/jobs/${jobId}/runs`, { kind: 'as-found' });
      if (r.status !== 201) throw new Error(`run not started: ${r.status} ${JSON.stringify(r.body)}`);
      runIds.push(r.body.id);
      await who.admin.post('/api/sim', { autopilot: { speed: 2 } });
    };
    await startRun();
    const shown = new Set<number>();
    const viewer = new WebSocket(`${base.replace('http', 'ws')}/ws`, { headers: { cookie: who.lead.cookie, origin: base } });
    viewer.on('message', (d) => {
      const m = JSON.parse(String(d)) as { type: string; seq: number };
      if (m.type === 'sample.received') shown.add(m.seq);
    });
    await new Promise((r) => viewer.once('message', r));
    const seq0 = ((await who.lead.get('/api/bench')).body as { latestSeq: number }).latestSeq;
    let keepRunning = true;
    const runKeeper = (async () => {
      while (keepRunning) {
        await sleep(2000);
        const r = (await who.tech.get(`/api/runs/${runIds[runIds.length - 1]}`)).body as { status: string };
        if (keepRunning && r.status !== 'running' && r.status !== 'paused') await startRun().catch(() => {});
      }
    })();

    type Req = { method: 'GET' | 'POST'; path: () => string; body?: unknown; weight: number };
    const mix: Req[] = [
      { method: 'GET', path: () => '/api/jobs', weight: 18 },
      { method: 'GET', path: () => '/api/instruments', weight: 14 },
      { method: 'GET', path: () => '/api/standards', weight: 14 },
      { method: 'GET', path: () => `/api/runs/${runIds[runIds.length - 1]}`, weight: 20 },
      { method: 'GET', path: () => `/api/runs/${runIds[runIds.length - 1]}/trace?from=${Date.now() - 10_000}&limit=2000`, weight: 12 },
      { method: 'GET', path: () => '/api/bench', weight: 10 },
      { method: 'POST', path: () => '/api/calc/evaluate', body: evaluateBody, weight: 12 },
    ];
    const total = mix.reduce((s, m) => s + m.weight, 0);
    const pick = () => {
      let x = Math.random() * total;
      for (const m of mix) if ((x -= m.weight) < 0) return m;
      return mix[0]!;
    };
    const clients = Object.values(who);
    const steps: Step[] = [];
    for (const rate of RATES) {
      const latencies: number[] = [];
      let shed = 0;
      let failed = 0;
      const inflight = new Set<Promise<void>>();
      const fire = (n: number) => {
        const m = pick();
        const c = clients[n % clients.length]!;
        const p = (async () => {
          const t = performance.now();
          try {
            const res = await fetch(base + m.path(), {
              method: m.method,
              headers: { cookie: c.cookie, ...(m.method === 'POST' ? { 'content-type': 'application/json', origin: base } : {}) },
              body: m.body === undefined ? undefined : JSON.stringify(m.body),
            });
            await res.arrayBuffer();
            if (res.status === 503 && res.headers.get('retry-after')) shed++;
            else if (!res.ok) failed++;
            else latencies.push(performance.now() - t);
          } catch {
            failed++;
          }
        })();
        inflight.add(p);
        void p.finally(() => inflight.delete(p));
      };
      const t0 = performance.now();
      let sent = 0;
      while (performance.now() - t0 < SECONDS * 1000) {
        const due = Math.floor(((performance.now() - t0) / 1000) * rate);
        while (sent < due) fire(sent++);
        await sleep(5);
      }
      await Promise.all(inflight);
      steps.push({ rate, sent, served: latencies.length, shed, failed, p50: percentile(latencies, 50), p99: percentile(latencies, 99) });
      process.stderr.write(`  ${rate} req/s: ${JSON.stringify(steps[steps.length - 1])}\n`);
      await sleep(1000);
    }
    keepRunning = false;
    await runKeeper;
    await who.admin.post('/api/sim', { autopilot: 'stop' });
    let bench = (await who.lead.get('/api/bench')).body as { latestSeq: number; storedSeq: number };
    const seqEnd = bench.latestSeq;
    for (let i = 0; i < 100 && bench.storedSeq < seqEnd; i++) {
      await sleep(100);
      bench = (await who.lead.get('/api/bench')).body;
    }
    await sleep(300);
    const stored = new Set<number>();
    for (let after = seq0; ; ) {
      const page = (await who.lead.get(`/api/bench/samples?after=${after}&limit=100000`)).body.items as { seq: number }[];
      for (const r of page) if (r.seq <= seqEnd) stored.add(r.seq);
      if (page.length < 100_000) break;
      after = page[page.length - 1]!.seq;
    }
    viewer.close();
    const streamed = [...shown].filter((s) => s > seq0 && s <= seqEnd);
    const lost = streamed.filter((s) => !stored.has(s)).length;
    const onset = steps.find((s) => s.shed / Math.max(1, s.sent) > SHED_ONSET);
    const figures: BenchFigure[] = [];
    for (const s of steps) {
      const targeted = s.rate === 200;
      figures.push({
        name: `shedding: ${s.rate} req/s (mixed API, capture running), p99 of served requests; ${s.served} served, ${s.shed} shed (503), ${s.failed} failed`,
        value: Number(s.p99.toFixed(1)),
        unit: 'ms',
        ...(targeted ? { target: `<= ${P99_TARGET_MS} ms`, ok: s.p99 <= P99_TARGET_MS && s.failed === 0 } : {}),
      });
    }
    figures.push({ name: `shedding: rate at which more than ${SHED_ONSET * 100} % is shed (of ${RATES.join(', ')} req/s)`, value: onset?.rate ?? NaN, unit: onset ? 'req/s' : `req/s (none up to ${RATES[RATES.length - 1]})` });
    figures.push({ name: 'shedding: capture samples streamed but not stored', value: lost, unit: `of ${streamed.length} streamed`, target: '0', ok: lost === 0 && streamed.length > 0 });
    figures.push({ name: 'shedding: machine load average at the end (1 min)', value: Number(os.loadavg()[0]!.toFixed(2)), unit: `on ${os.cpus().length} cores` });
    return figures;
  } finally {
    server.child.kill('SIGTERM');
    await server.exited;
    fs.rmSync(dir, { recursive: true, force: true });
  }
}

if (isMainModule(import.meta.url)) {
  console.table(await run());
  process.exit(0);
}
