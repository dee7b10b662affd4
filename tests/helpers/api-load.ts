/**
 * Load on a running server, shared by the load proof (tests/proof/load.test.ts) and the shedding
 * benchmark (perf/shedding.bench.ts): a capture kept running under the sim autopilot, open-loop
 * mixed API traffic at a set rate, and the samples the writer stored, to compare with what was
 * streamed.
 */
import http from 'node:http';
import { EvaluateBodySchema } from '../../shared/schemas/calc';
import { percentile, sleep } from './proof-helpers';
import type { ApiClient } from './test-server';

/** A valid evaluation: FT-101-like square-root transmitter, five points up. */
export const EVALUATE_BODY = EvaluateBodySchema.parse({
  instrument: { lrv: 0, urv: 25, unit: 'kPa', outputMode: 'sqrt-transmitter', cutoffMode: 'none', tolerancePctSpan: 0.5 },
  standards: { pressure: { kind: 'spec', unit: 'kPa', pctOfReading: 0.02, pctOfFullScale: 0.01, fullScale: 100 }, current: { pctOfReading: 0.01, floorMa: 0.001 } },
  decisionRule: 'guard-band',
  readings: [10, 25, 50, 75, 100].map((f) => ({ nominalPct: f, basis: 'flow', direction: 'up', appliedDp: 25 * (f / 100) ** 2, measuredMa: 4 + 0.16 * f + 0.002, n: 30 })),
});

/**
 * Starts an as-found run of `jobId` under the autopilot (speed 2) and keeps one running: every 2 s
 * the latest run is read, and one read back as ended (complete or aborted; a shed 503 has no
 * status to go by) is replaced. `stop()` ends the keeping.
 */
export async function keepCaptureRunning(tech: ApiClient, admin: ApiClient, jobId: string): Promise<{ runIds: string[]; latest(): string; stop(): Promise<void> }> {
  const runIds: string[] = [];
  const startRun = async () => {
    const r = await tech.post(`/api/jobs/${jobId}/runs`, { kind: 'as-found' });
    if (r.status !== 201) throw new Error(`run not started: ${r.status} ${JSON.stringify(r.body)}`);
    runIds.push(r.body.id as string);
    let sim = await admin.post('/api/sim', { autopilot: { speed: 2 } });
    // The simulator's control is not exempt from shedding: a busy server asks to come back (Retry-After).
    for (let i = 0; i < 30 && sim.status === 503 && sim.headers.get('retry-after'); i++) {
      await sleep(Number(sim.headers.get('retry-after')) * 1000);
      sim = await admin.post('/api/sim', { autopilot: { speed: 2 } });
    }
    if (sim.status !== 200) throw new Error(`autopilot not started: ${sim.status} ${JSON.stringify(sim.body)}`);
  };
  await startRun();
  let keep = true;
  const keeper = (async () => {
    while (keep) {
      await sleep(2000);
      const r = await tech.get(`/api/runs/${runIds[runIds.length - 1]}`);
      const status = (r.body as { status?: string }).status;
      if (keep && r.status === 200 && (status === 'complete' || status === 'aborted')) await startRun();
    }
  })();
  return {
    runIds,
    latest: () => runIds[runIds.length - 1]!,
    stop: async () => {
      keep = false;
      await keeper;
    },
  };
}

export interface LoadRequest {
  name: string;
  method: 'GET' | 'POST';
  path: () => string;
  body?: unknown;
  weight: number;
}

/** The mixed API traffic of a bench in use: the lists, the running run, its trace, the bench, calc evaluations. */
export function benchMix(runId: () => string): LoadRequest[] {
  return [
    { name: 'jobs', method: 'GET', path: () => '/api/jobs', weight: 18 },
    { name: 'instruments', method: 'GET', path: () => '/api/instruments', weight: 14 },
    { name: 'standards', method: 'GET', path: () => '/api/standards', weight: 14 },
    { name: 'run', method: 'GET', path: () => `/api/runs/${runId()}`, weight: 20 },
    { name: 'trace', method: 'GET', path: () => `/api/runs/${runId()}/trace?from=${Date.now() - 10_000}&limit=2000`, weight: 12 },
    { name: 'bench', method: 'GET', path: () => '/api/bench', weight: 10 },
    { name: 'evaluate', method: 'POST', path: () => '/api/calc/evaluate', body: EVALUATE_BODY, weight: 12 },
  ];
}

export interface TrafficResult {
  sent: number;
  elapsedS: number;
  /** Latency of every answer (shed ones included), ms. */
  latencies: number[];
  /** Latency of the answers that were served (not shed, not failed), ms. */
  served: number[];
  byName: Record<string, number[]>;
  /** 503 with Retry-After: load shedding, an answer by design. */
  shed: number;
  failures: string[];
}

/**
 * One request on a keep-alive agent, the whole answer read: status and whether it carried
 * Retry-After. node:http rather than fetch: at 200 req/s fetch costs the load generator about a
 * third of a core (measured 2026-12-03), which on a two-core machine would be measured as server
 * latency.
 */
function send(agent: http.Agent, url: string, method: string, headers: Record<string, string>, body: string | undefined, retried = false): Promise<{ status: number; retryAfter: boolean }> {
  return new Promise((resolve, reject) => {
    const req = http.request(url, { method, agent, headers: body === undefined ? headers : { ...headers, 'content-length': String(Buffer.byteLength(body)) } }, (res) => {
      res.on('data', () => {});
      res.on('end', () => resolve({ status: res.statusCode ?? 0, retryAfter: res.headers['retry-after'] !== undefined }));
      res.on('error', reject);
    });
    req.on('error', (err: NodeJS.ErrnoException) => {
      // A kept-alive socket the server closed as idle just as it was reused: sent again once, as the
      // Node.js documentation of `request.reusedSocket` advises (the mix is reads and a calculation,
      // safe to send twice).
      if (!retried && req.reusedSocket && err.code === 'ECONNRESET') send(agent, url, method, headers, body, true).then(resolve, reject);
      else reject(err);
    });
    req.end(body);
  });
}

/** Open-loop traffic: requests go out on schedule at `rate`/s for `seconds`, whatever the answers' latency. */
export async function openLoopTraffic(o: { base: string; clients: ApiClient[]; mix: LoadRequest[]; rate: number; seconds: number }): Promise<TrafficResult> {
  const total = o.mix.reduce((s, m) => s + m.weight, 0);
  const pick = () => {
    let x = Math.random() * total;
    for (const m of o.mix) if ((x -= m.weight) < 0) return m;
    return o.mix[0]!;
  };
  const out: TrafficResult = { sent: 0, elapsedS: 0, latencies: [], served: [], byName: {}, shed: 0, failures: [] };
  const inflight = new Set<Promise<void>>();
  const agent = new http.Agent({ keepAlive: true, maxSockets: Infinity });
  const fire = (n: number) => {
    const m = pick();
    const c = o.clients[n % o.clients.length]!;
    const p = (async () => {
      const t = performance.now();
      try {
        const res = await send(
          agent,
          o.base + m.path(),
          m.method,
          { cookie: c.cookie, ...(m.method === 'POST' ? { 'content-type': 'application/json', origin: o.base } : {}) },
          m.body === undefined ? undefined : JSON.stringify(m.body),
        );
        const ms = performance.now() - t;
        out.latencies.push(ms);
        (out.byName[m.name] ??= []).push(ms);
        if (res.status === 503 && res.retryAfter) out.shed++;
        else if (res.status < 200 || res.status > 299) out.failures.push(`${m.method} ${m.path()} → ${res.status}`);
        else out.served.push(ms);
      } catch (e) {
        out.failures.push(`${m.method} ${m.path()} → ${(e as Error).message}`);
      }
    })();
    inflight.add(p);
    void p.finally(() => inflight.delete(p));
  };
  const t0 = performance.now();
  while (performance.now() - t0 < o.seconds * 1000) {
    const due = Math.floor(((performance.now() - t0) / 1000) * o.rate);
    while (out.sent < due) fire(out.sent++);
    await sleep(5);
  }
  await Promise.all(inflight);
  agent.destroy();
  out.elapsedS = (performance.now() - t0) / 1000;
  return out;
}

/** p50/p95/p99/max of a list of latencies, ms, one decimal. */
export function latencyFigures(ms: number[]): { p50Ms: number; p95Ms: number; p99Ms: number; maxMs: number } {
  const r = (v: number) => Number(v.toFixed(1));
  return { p50Ms: r(percentile(ms, 50)), p95Ms: r(percentile(ms, 95)), p99Ms: r(percentile(ms, 99)), maxMs: r(Math.max(...ms)) };
}

/**
 * Stops the autopilot, lets the writer catch up with the hub (up to 10 s), and returns the latest
 * seq then and every seq stored after `seq0` up to it.
 */
export async function storedAfter(admin: ApiClient, reader: ApiClient, seq0: number): Promise<{ seqEnd: number; stored: Set<number>; writerFailures: number; storedSeq: number }> {
  await admin.post('/api/sim', { autopilot: 'stop' });
  let bench = (await reader.get('/api/bench')).body as { latestSeq: number; storedSeq: number; writer: { failures: number } };
  const seqEnd = bench.latestSeq;
  for (let i = 0; i < 100 && bench.storedSeq < seqEnd; i++) {
    await sleep(100);
    bench = (await reader.get('/api/bench')).body;
  }
  await sleep(300);
  const stored = new Set<number>();
  for (let after = seq0; ; ) {
    const page = (await reader.get(`/api/bench/samples?after=${after}&limit=100000`)).body.items as { seq: number }[];
    for (const r of page) if (r.seq <= seqEnd) stored.add(r.seq);
    if (page.length < 100_000) break;
    after = page[page.length - 1]!.seq;
  }
  return { seqEnd, stored, writerFailures: bench.writer.failures, storedSeq: bench.storedSeq };
}
