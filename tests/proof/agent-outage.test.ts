/**
 * At-least-once, deduplicated (issue 11, acceptance 10), full version: a bench agent keeps reading
 * for ten minutes (by its own clock, injected, so the proof stays short) while the server cannot be
 * reached, is killed and restarted from its disk queue in the middle of that, then gets the link
 * back with its acknowledgements lost, and the server itself is killed (SIGKILL) and restarted on
 * the same data directory before the agent's batches are acknowledged. In the end every line the
 * agent read is stored exactly once, in the order read. Real server process, real agent, a TCP
 * proxy for the link.
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { startAgent, type Agent } from '../../server/agent';
import { startLinkProxy, type LinkProxy } from '../helpers/link-proxy';
import { sleep } from '../helpers/proof-helpers';
import { freshPostgresUrl, randomPort, startServerProcess, waitHealthy, type ServerProcess } from '../helpers/proof-process';
import { ApiClient, demoEmail } from '../helpers/test-server';

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

describe('agent through ten minutes without the server, its own restart and a server kill', () => {
  it('ends with every line the agent read stored exactly once', async () => {
    pgdb = await freshPostgresUrl('sp_agent_outage');
    // Start-up is slow on a busy machine (migrations, seed): wait up to five minutes for health.
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

    // The agent's clock: 20 readings a second, advanced by the feed, not by waiting.
    let agentNow = Date.now();
    const fed: string[] = [];
    const feed = (a: Agent, count: number) => {
      for (let i = 0; i < count; i++) {
        agentNow += 50;
        const raw = `DP ${(20 + fed.length * 0.0001).toFixed(4)} inH2O@68F`;
        fed.push(raw);
        a.feed('pressure', raw);
        if (i % 100 === 99) a.tick();
      }
      a.tick();
    };
    const agentOptions = { server: proxy.url, token, benchId: 'outage-bench', noDevices: true, queueDir, maxBackoffMs: 500, now: () => agentNow };
    let agent = await startAgent(agentOptions);
    await waitFor(() => agent.stats().linked, 60_000, 'agent linked');
    feed(agent, 200);
    await waitFor(() => agent.stats().queuedLines === 0, 60_000, 'first lines acknowledged');

    // Ten minutes (agent time) without the server; the agent is killed and restarted halfway.
    proxy.cut();
    await waitFor(() => !agent.stats().linked, 10_000, 'link lost');
    feed(agent, 6000);
    await agent.crash();
    agent = await startAgent(agentOptions);
    feed(agent, 6000);
    expect(agent.stats().queuedLines).toBe(12_000);

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

    await waitFor(() => agent.stats().queuedLines === 0, 240_000, 'queue drained after the server restart');
    const stats = agent.stats();
    await agent.stop();
    expect(stats.dropped).toBe(0);
    expect(stats.duplicates).toBeGreaterThan(0);

    const viewer = new ApiClient(server.base);
    await viewer.login(demoEmail('auditor'));
    const r = await viewer.get('/api/bench/samples?benchId=outage-bench&limit=100000');
    expect(r.status).toBe(200);
    const stored = (r.body.items as { raw: string }[]).map((x) => x.raw);
    console.log(`agent outage: ${fed.length} lines read, ${stored.length} stored, ${stats.duplicates} duplicate batches dropped by the server, ${stats.resent} batches resent`);
    expect(stored.length).toBe(fed.length);
    expect(stored).toEqual(fed);
  }, 1_200_000);
});
