/**
 * The bench agent: a hub on a (simulated) bench PC forwards every raw line to the server over the
 * authenticated WebSocket, keeps them while the link is down, and loses none.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { startAgent } from '../../server/agent';
import { DEMO_PASSWORD, demoEmail, startTestServer, type TestServer } from '../helpers/test-server';
import { until } from './runs-helpers';

let srv: TestServer;
beforeAll(async () => {
  srv = await startTestServer();
});
afterAll(async () => {
  await srv?.close();
});

const counted = (benchId: string) => {
  const b = srv.bench.status().benches.find((x) => x.benchId === benchId);
  const d = b?.devices ?? {};
  return Object.values(d).reduce((n, c) => n + c.samples + c.badLines, 0);
};

describe('bench agent', () => {
  it('forwards every line, buffering through a dropped link, decoded on the server by the shared protocol code', async () => {
    const agent = await startAgent({ server: srv.url, email: demoEmail('tech'), password: DEMO_PASSWORD, benchId: 'agent-7', sim: true });
    try {
      await until(() => counted('agent-7') > 20, 20_000, 'lines arrive');
      agent.dropLink();
      // Lines read while the link is down are kept by the agent.
      const readAtDrop = agent.stats().read;
      await until(() => agent.stats().read > readAtDrop + 20, 10_000, 'agent keeps reading');
      await until(() => agent.stats().linked, 10_000, 'relinked');
      await agent.stopDevices();
      const read = agent.stats().read;
      await until(() => agent.stats().buffered === 0 && counted('agent-7') === read, 10_000, 'all lines on the server');
      expect(agent.stats().dropped).toBe(0);
      expect(agent.stats().reconnects).toBeGreaterThanOrEqual(1);
      const bench = srv.bench.status().benches.find((b) => b.benchId === 'agent-7')!;
      expect(bench.devices.pressure!.samples).toBeGreaterThan(5);
      expect(bench.devices.current!.samples).toBeGreaterThan(5);
      expect(bench.devices.current!.lastUnit).toBe('mA');
      // ...and they are stored like local samples.
      await srv.bench.writer.flush();
      const stored = (await srv.bench.samplesAfter(0, 100_000, 'agent-7')).length;
      expect(stored).toBe(read);
    } finally {
      await agent.stop();
    }
  });
});
