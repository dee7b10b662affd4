/**
 * At-least-once, deduplicated (issue 11, acceptance 10): a bench agent keeps reading, 20 lines a
 * second on the real clock, while the server cannot be reached (PROOF_LEVEL=full: ten minutes; the
 * short pass of `npm test`: 20 s; PROOF_OUTAGE_SECONDS sets it), is killed and restarted from its
 * disk queue in the middle of that, then gets the link back with its acknowledgements lost, and the
 * server itself is killed (SIGKILL) and restarted on the same data directory before the agent's
 * batches are acknowledged. In the end every line the agent read is stored exactly once, in the
 * order read. Real server process, real agent (its own clock, its own send interval), a TCP proxy
 * for the link. The outage is real time, not an injected clock: the server judges a sender's clock
 * against its own, and the lines of a real outage reach it minutes old.
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { startAgent, type Agent } from '../../server/agent';
import { startLinkProxy, type LinkProxy } from '../helpers/link-proxy';
import { recordSummary, sleep } from '../helpers/proof-helpers';
import { freshPostgresUrl, randomPort, startServerProcess, waitHealthy, type ServerProcess } from '../helpers/proof-process';
import { proofCount } from '../helpers/proof-level';
import { ApiClient, demoEmail } from '../helpers/test-server';

const OUTAGE_S = proofCount('PROOF_OUTAGE_SECONDS', 20, 600);
const LINES_PER_S = 20;

const dataDir = fs.mkdtempSync(path.join(os.tmpdir(), 'sp-agent-outage-'));
const queueDir = fs.mkdtempSync(path.join(os.tmpdir(), 'sp-agent-queue-'));
const children: ServerProcess[] = [];
let proxy: LinkProxy | undefined;
let pgdb: Awaited<ReturnType<typeof freshPostgresUrl>>;

afterAll(async () => {
  for (const c of children) if (c.child.exitCode === null) c.child.kill('SIGKILL');
  await proxy?.close();
  await pgdb?.drop();
  fs.rmSync(dataDir, { recursive: true, force: true });
  fs.rmSync(queueDir, { recursive: true, force: true });
});

async function waitFor(cond: () => boolean | Promise<boolean>, ms: number, what: string): Promise<void> {
  const end = Date.now() + ms;
  while (!(await cond())) {
    if (Date.now() > end) throw new Error(`${what}: not within ${ms} ms`);
    await sleep(100);
  }
}

describe(`agent through ${OUTAGE_S} s without the server, its own restart and a server kill`, () => {
  it('ends with every line the agent read stored exactly once', async () => {
    pgdb = await freshPostgresUrl('sp_agent_outage');
    const start = async () => {
      const s = await startServerProcess({ port: await randomPort(), dataDir, databaseUrl: pgdb?.url, env: { SEED_DEMO: '1' } });
      children.push(s);
      await waitHealthy(s, 300_000);
      return s;
    };
    let server = await start();
    const lead = new ApiClient(server.base);
    await lead.login(demoEmail('lead'));
    const reg = await lead.post('/api/benches', { id: 'outage-bench', label: 'Compressed-air ring bench PC' });
    expect(reg.status, JSON.stringify(reg.body)).toBe(201);
    const token = reg.body.token as string;
    proxy = await startLinkProxy(server.base);

    // The agent reads LINES_PER_S lines a second, on the real clock, for `seconds`.
    const fed: string[] = [];
    const read = (a: Agent, seconds: number) =>
      new Promise<void>((resolve) => {
        const until = fed.length + Math.round(seconds * LINES_PER_S);
        const timer = setInterval(() => {
          const raw = `DP ${(20 + fed.length * 0.0001).toFixed(4)} inH2O@68F`;
          fed.push(raw);
          a.feed('pressure', raw);
          if (fed.length >= until) {
            clearInterval(timer);
            resolve();
          }
        }, 1000 / LINES_PER_S);
      });
    const agentOptions = { server: proxy.url, token, benchId: 'outage-bench', noDevices: true, queueDir, maxBackoffMs: 2000 };
    let agent = await startAgent(agentOptions);
    await waitFor(() => agent.stats().linked, 60_000, 'agent linked');
    await read(agent, 5);
    await waitFor(() => agent.stats().queuedLines === 0, 60_000, 'first lines acknowledged');

    // The outage; the agent is killed and restarted from its disk queue halfway.
    proxy.cut();
    await waitFor(() => !agent.stats().linked, 10_000, 'link lost');
    const before = fed.length;
    await read(agent, OUTAGE_S / 2);
    await agent.crash();
    agent = await startAgent(agentOptions);
    await read(agent, OUTAGE_S / 2);
    agent.tick();
    expect(agent.stats().queuedLines).toBe(fed.length - before);

    // The link returns but every acknowledgement is lost; then the server is killed and restarted.
    proxy.restore();
    proxy.muteReplies(true);
    await waitFor(() => agent.stats().sent >= 16, 60_000, 'batches sent over the muted link');
    await sleep(1500); // lets the server store (and journal) some of them before the kill
    server.child.kill('SIGKILL');
    await server.exited;
    proxy.cut();
    server = await start();
    proxy.retarget(server.base);
    proxy.restore();

    const drainStart = Date.now();
    await waitFor(() => agent.stats().queuedLines === 0, 240_000 + OUTAGE_S * 1000, 'queue drained after the server restart');
    const drainS = (Date.now() - drainStart) / 1000;
    const stats = agent.stats();
    await agent.stop();
    expect(stats.dropped).toBe(0);
    expect(stats.duplicates).toBeGreaterThan(0);

    const viewer = new ApiClient(server.base);
    await viewer.login(demoEmail('auditor'));
    const r = await viewer.get('/api/bench/samples?benchId=outage-bench&limit=100000');
    expect(r.status).toBe(200);
    const stored = (r.body.items as { raw: string }[]).map((x) => x.raw);
    const summary = { outageSeconds: OUTAGE_S, linesRead: fed.length, linesStored: stored.length, duplicateBatches: stats.duplicates, resentBatches: stats.resent, drainSeconds: Number(drainS.toFixed(1)) };
    console.log(`agent outage: ${JSON.stringify(summary)}`);
    recordSummary(pgdb ? 'agentOutagePostgres' : 'agentOutage', summary);
    expect(stored.length).toBe(fed.length);
    expect(stored).toEqual(fed);
  }, 1_800_000);
});
