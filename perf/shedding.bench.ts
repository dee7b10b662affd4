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
 *
 * `BENCH_SHED_VARIANTS` compares servers in one run, on a shared machine where figures drift from
 * minute to minute: `name:spec;name:spec`, each spec space-separated `KEY=VALUE` server settings
 * and optionally `@/path/of/another/checkout` (its own sources, bundled there). Every variant's
 * server runs side by side (each with its capture and viewer); each rate is sent to one variant
 * after the other, the order turning at each rate. Example:
 * `BENCH_SHED_VARIANTS='before:@/tmp/before;nice10:DB_THREAD_NICE=10;nice0:DB_THREAD_NICE=0'`.
 * Run: `npm run bench -- shedding`, or `npx tsx perf/shedding.bench.ts`.
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { pathToFileURL } from 'node:url';
import WebSocket from 'ws';
import { ApiClient, demoEmail } from '../tests/helpers/test-server';
import { benchMix, keepCaptureRunning, openLoopTraffic, storedAfter } from '../tests/helpers/api-load';
import { percentile, prepareFt101, sleep } from '../tests/helpers/proof-helpers';
import { startHealthy, type ServerProcess } from '../tests/helpers/proof-process';
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

interface Variant {
  name: string;
  env: Record<string, string>;
  /** Another checkout whose server to run. */
  root?: string;
}

function variants(): Variant[] {
  const spec = process.env.BENCH_SHED_VARIANTS;
  if (!spec) return [{ name: '', env: {} }];
  return spec.split(';').map((v) => {
    const at = v.indexOf(':');
    const out: Variant = { name: at === -1 ? v : v.slice(0, at), env: {} };
    for (const t of (at === -1 ? '' : v.slice(at + 1)).split(' ').filter(Boolean)) {
      if (t.startsWith('@')) out.root = path.resolve(t.slice(1));
      else out.env[t.slice(0, t.indexOf('='))] = t.slice(t.indexOf('=') + 1);
    }
    return out;
  });
}

/** A server of one variant, signed in, with a capture kept running and a viewer counting what it is shown. */
async function setUp(v: Variant) {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'sp-shed-'));
  const env: Record<string, string> = { DATABASE_URL: '', ...v.env };
  if (process.env.BENCH_SHED_MAX_IN_FLIGHT) env.MAX_IN_FLIGHT = process.env.BENCH_SHED_MAX_IN_FLIGHT;
  let bundle: string | undefined;
  if (v.root) {
    const other = (await import(pathToFileURL(path.join(v.root, 'tests/helpers/server-bundle.ts')).href)) as { serverBundle(): Promise<string> };
    bundle = await other.serverBundle();
  }
  const server: ServerProcess = await startHealthy({ dataDir: dir, env, ...(bundle ? { bundle } : {}) });
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
  return {
    v,
    base,
    clients: Object.values(who),
    mix: benchMix(capture.latest),
    steps: [] as Step[],
    /** Stops the capture and counts the samples streamed to the viewer but not stored. */
    async lost(): Promise<{ lost: number; streamed: number }> {
      await capture.stop();
      const { seqEnd, stored } = await storedAfter(who.admin, who.lead, seq0);
      viewer.close();
      const streamed = [...shown].filter((s) => s > seq0 && s <= seqEnd);
      return { lost: streamed.filter((s) => !stored.has(s)).length, streamed: streamed.length };
    },
    async close() {
      viewer.close();
      server.child.kill('SIGTERM');
      await server.exited;
      fs.rmSync(dir, { recursive: true, force: true });
    },
  };
}

export async function run(): Promise<BenchFigure[]> {
  const setups: Awaited<ReturnType<typeof setUp>>[] = [];
  try {
    for (const v of variants()) setups.push(await setUp(v));
    for (const [i, rate] of RATES.entries()) {
      const order = setups.map((_, k) => setups[(k + i) % setups.length]!);
      for (const s of order) {
        const t = await openLoopTraffic({ base: s.base, clients: s.clients, mix: s.mix, rate, seconds: SECONDS });
        s.steps.push({ rate, sent: t.sent, served: t.served.length, shed: t.shed, failed: t.failures.length, p50: percentile(t.served, 50), p99: percentile(t.served, 99) });
        const failures = [...new Set(t.failures.map((f) => f.replace(/[0-9a-f-]{36}/g, ':id')))].slice(0, 3);
        process.stderr.write(`  ${s.v.name ? `${s.v.name} ` : ''}${rate} req/s: ${JSON.stringify(s.steps[s.steps.length - 1])} load ${os.loadavg()[0]!.toFixed(2)}${failures.length ? ` failures: ${failures.join('; ')}` : ''}\n`);
        await sleep(1000);
      }
    }
    const figures: BenchFigure[] = [];
    for (const s of setups) {
      const label = s.v.name ? `shedding [${s.v.name}]` : 'shedding';
      const { lost, streamed } = await s.lost();
      for (const st of s.steps) {
        const targeted = st.rate === 200;
        figures.push({
          name: `${label}: ${st.rate} req/s (mixed API, capture running), p99 of served requests; ${st.served} served, ${st.shed} shed (503), ${st.failed} failed`,
          value: Number(st.p99.toFixed(1)),
          unit: 'ms',
          ...(targeted ? { target: `<= ${P99_TARGET_MS} ms`, ok: st.p99 <= P99_TARGET_MS && st.failed === 0 } : {}),
        });
      }
      const onset = s.steps.find((st) => st.shed / Math.max(1, st.sent) > SHED_ONSET);
      figures.push({ name: `${label}: rate at which more than ${SHED_ONSET * 100} % is shed (of ${RATES.join(', ')} req/s)`, value: onset?.rate ?? NaN, unit: onset ? 'req/s' : `req/s (none up to ${RATES[RATES.length - 1]})` });
      figures.push({ name: `${label}: capture samples streamed but not stored`, value: lost, unit: `of ${streamed} streamed`, target: '0', ok: lost === 0 && streamed > 0 });
    }
    figures.push({ name: 'shedding: machine load average at the end (1 min)', value: Number(os.loadavg()[0]!.toFixed(2)), unit: `on ${os.cpus().length} cores` });
    return figures;
  } finally {
    for (const s of setups) await s.close();
  }
}

if (isMainModule(import.meta.url)) {
  console.table(await run());
  process.exit(0);
}
