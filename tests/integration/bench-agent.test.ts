/**
 * The bench agent (acceptance 10, short version): a registered bench's agent forwards every raw
 * line over `/ws` with its own token; lines survive a dropped link, a server that cannot be reached,
 * lost acknowledgements and the agent's own crash and restart (its on-disk queue), and each line
 * the agent read is stored exactly once. The ten-minute version is tests/proof/agent-outage.test.ts.
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { startAgent, type Agent } from '../../server/agent';
import { startLinkProxy, type LinkProxy } from '../helpers/link-proxy';
import { ApiClient, demoEmail, startTestServer, type TestServer } from '../helpers/test-server';
import { until } from './runs-helpers';

let srv: TestServer;
let proxy: LinkProxy;
let token: string;
let queueDir: string;
beforeAll(async () => {
  srv = await startTestServer();
  proxy = await startLinkProxy(srv.url);
  const lead = new ApiClient(srv.url);
  await lead.login(demoEmail('lead'));
  const r = await lead.post('/api/benches', { id: 'agent-7', label: 'Boiler house bench PC' });
  expect(r.status).toBe(201);
  token = r.body.token;
  queueDir = fs.mkdtempSync(path.join(os.tmpdir(), 'agent-queue-it-'));
}, 300_000);
afterAll(async () => {
  await proxy?.close();
  await srv?.close();
  if (queueDir) fs.rmSync(queueDir, { recursive: true, force: true });
});

async function storedRaws(benchId: string): Promise<string[]> {
  await srv.bench.writer.flush();
  return (await srv.bench.samplesAfter(0, 1_000_000, benchId)).map((r) => r.raw);
}

describe('bench agent', () => {
  it('forwards the simulated rig with its token; lines are decoded on the server by the shared protocol code', async () => {
    const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'agent-sim-'));
    const agent = await startAgent({ server: srv.url, token, benchId: 'agent-7', sim: true, queueDir: dir });
    try {
      await until(() => agent.stats().stored > 5, 60_000, 'batches acknowledged');
      await agent.stopDevices();
      agent.tick();
      await until(() => agent.stats().queuedLines === 0, 30_000, 'queue drained');
      const bench = srv.bench.status().benches.find((b) => b.benchId === 'agent-7')!;
      expect(bench.devices.pressure!.samples).toBeGreaterThan(0);
      expect(bench.devices.current!.lastUnit).toBe('mA');
      expect((await storedRaws('agent-7')).length).toBe(agent.stats().read);
    } finally {
      await agent.stop();
      fs.rmSync(dir, { recursive: true, force: true });
    }
  }, 120_000);

  it('stores every line exactly once through an unreachable server, lost acknowledgements and a crash of the agent', async () => {
    const before = (await storedRaws('agent-7')).length;
    const fed: string[] = [];
    let n = 0;
    // A fast simulated rig: distinct readings, so a loss or a double shows in the stored order.
    const feed = (a: Agent, count: number) => {
      for (let i = 0; i < count; i++) {
        const raw = `DP ${(10 + n++ * 0.0001).toFixed(4)} inH2O@68F`;
        fed.push(raw);
        a.feed('pressure', raw);
      }
      a.tick();
    };
    const a1 = await startAgent({ server: proxy.url, token, benchId: 'agent-7', noDevices: true, queueDir, maxBackoffMs: 300 });
    await until(() => a1.stats().linked, 30_000, 'linked');
    feed(a1, 400);
    await until(() => a1.stats().queuedLines === 0, 30_000, 'first lines stored');
    // The server becomes unreachable; the agent keeps reading.
    proxy.cut();
    await until(() => !a1.stats().linked, 10_000, 'link lost');
    feed(a1, 700);
    // The link comes back, but the acknowledgements are lost: the lines are stored, the agent does not know.
    proxy.restore();
    proxy.muteReplies(true);
    await until(() => a1.stats().sent >= 3 && a1.stats().reconnects >= 1, 30_000, 'resent over the muted link');
    await until(async () => (await storedRaws('agent-7')).length >= before + 1100, 30_000, 'stored although unacknowledged');
    feed(a1, 50);
    // The agent is killed with all that unacknowledged, and starts again from its disk queue.
    await a1.crash();
    proxy.cut();
    proxy.restore();
    const a2 = await startAgent({ server: proxy.url, token, benchId: 'agent-7', noDevices: true, queueDir, maxBackoffMs: 300 });
    try {
      expect(a2.senderId).toBe(a1.senderId);
      feed(a2, 300);
      await until(() => a2.stats().linked && a2.stats().queuedLines === 0, 60_000, 'queue drained after restart');
      expect(a2.stats().duplicates).toBeGreaterThan(0);
      const stored = (await storedRaws('agent-7')).slice(before);
      expect(stored.length).toBe(fed.length);
      expect(stored).toEqual(fed);
      expect(a2.stats().dropped).toBe(0);
    } finally {
      await a2.stop();
    }
  }, 180_000);
});
