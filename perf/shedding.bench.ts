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
 * Run: `npm run bench -- shedding`, or `npx tsx perf/shedding.bench.ts`.
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import WebSocket from 'ws';
import { ApiClient, demoEmail } from '../tests/helpers/test-server';
import { benchMix, keepCaptureRunning, openLoopTraffic, storedAfter } from '../tests/helpers/api-load';
import { percentile, prepareFt101, sleep } from '../tests/helpers/proof-helpers';
import { startHealthy } from '../tests/helpers/proof-process';
import { isMainModule, type BenchFigure } from './figure';

const SECONDS = Number(process.env.BENCH_SHED_SECONDS ?? 15);
const RATES = (process.env.BENCH_SHED_RATES ?? '100,150,200,250,300').split(',').map(Number);
const P99_TARGET_MS = 200;
const SHED_ONSET = 0.01;

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
    const capture = await keepCaptureRunning(who.tech, who.admin, jobId);
    const shown = new Set<number>();
    const viewer = new WebSocket(`${base.replace('http', 'ws')}/ws`, { headers: { cookie: who.lead.cookie, origin: base } });
    viewer.on('message', (d) => {
      const m = JSON.parse(String(d)) as { type: string; seq: number };
      if (m.type === 'sample.received') shown.add(m.seq);
    });
    await new Promise((r) => viewer.once('message', r));
    const seq0 = ((await who.lead.get('/api/bench')).body as { latestSeq: number }).latestSeq;
    const mix = benchMix(capture.latest);
    const clients = Object.values(who);
    const steps: Step[] = [];
    for (const rate of RATES) {
      const t = await openLoopTraffic({ base, clients, mix, rate, seconds: SECONDS });
      steps.push({ rate, sent: t.sent, served: t.served.length, shed: t.shed, failed: t.failures.length, p50: percentile(t.served, 50), p99: percentile(t.served, 99) });
      process.stderr.write(`  ${rate} req/s: ${JSON.stringify(steps[steps.length - 1])}\n`);
      await sleep(1000);
    }
    await capture.stop();
    const { seqEnd, stored } = await storedAfter(who.admin, who.lead, seq0);
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
