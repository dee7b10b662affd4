/**
 * Durability: a server killed with SIGKILL while capturing restarts with every acknowledged
 * sample present, and its sequence numbers continue after the last one stored.
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { randomPort, startServerProcess, waitHealthy, type ServerProcess } from '../helpers/proof-process';
import { ApiClient, demoEmail } from '../helpers/test-server';
import { streamClient, until } from './runs-helpers';

const dataDir = fs.mkdtempSync(path.join(os.tmpdir(), 'stillpoint-durability-'));
const children: ServerProcess[] = [];

async function startServer(port: number): Promise<{ child: ServerProcess['child']; url: string }> {
  const s = await startServerProcess({ port, dataDir, env: { HOLD_SECONDS: '1' } });
  children.push(s);
  await waitHealthy(s, 60_000);
  return { child: s.child, url: s.base };
}

afterAll(() => {
  for (const c of children) if (c.child.exitCode === null) c.child.kill('SIGKILL');
  fs.rmSync(dataDir, { recursive: true, force: true });
});

describe('durability: SIGKILL during capture', () => {
  it('keeps every acknowledged sample and continues the sequence after a restart', async () => {
    const port = await randomPort();
    const first = await startServer(port);
    const admin = new ApiClient(first.url);
    await admin.login(demoEmail('admin'));
    const ws = streamClient({ url: first.url }, admin);
    await ws.opened;
    // Let samples flow and be journaled for a while, reading the acknowledged seq as we go.
    // The demo seed may already hold stored samples: count from the first sample this stream sees.
    let acked = 0;
    await until(
      async () => {
        const first = ws.messages.find((m) => m.type === 'sample.received')?.seq;
        acked = (await admin.get('/api/bench')).body.ackedSeq as number;
        return first !== undefined && acked > first + 60;
      },
      30_000,
      'samples acknowledged',
    );
    // Acknowledged just before the kill: samples keep arriving, so the kill lands mid-batch.
    acked = (await admin.get('/api/bench')).body.ackedSeq as number;
    first.child.kill('SIGKILL');
    await new Promise<void>((r) => first.child.once('exit', () => r()));
    ws.close();
    const seen = ws.messages.filter((m) => m.type === 'sample.received').map((m) => m.seq);
    const mustHave = seen.filter((s) => s <= acked);
    expect(mustHave.length).toBeGreaterThan(40);

    const second = await startServer(port);
    const again = new ApiClient(second.url);
    await again.login(demoEmail('admin'));
    const stored = new Set<number>();
    let after = 0;
    for (;;) {
      const page = (await again.get(`/api/bench/samples?after=${after}&limit=10000`)).body.items as { seq: number }[];
      if (!page.length) break;
      for (const s of page) stored.add(s.seq);
      after = page[page.length - 1]!.seq;
      if (after > acked + 100_000) break;
    }
    const missing = mustHave.filter((s) => !stored.has(s));
    expect(missing).toEqual([]);
    const status = (await again.get('/api/bench')).body as { latestSeq: number; writer: { replayed: number } };
    // Numbering continues after everything stored before the kill.
    const maxBefore = Math.max(...seen);
    await until(async () => ((await again.get('/api/bench')).body.latestSeq as number) > maxBefore, 10_000, 'new samples');
    const fresh = (await again.get(`/api/bench/samples?after=${maxBefore}&limit=10`)).body.items as { seq: number }[];
    expect(status.latestSeq).toBeGreaterThanOrEqual(acked);
    await until(async () => ((await again.get(`/api/bench/samples?after=${maxBefore}&limit=10`)).body.items as unknown[]).length > 0, 10_000, 'stored after restart');
    expect(fresh.every((s) => s.seq > maxBefore)).toBe(true);
    second.child.kill('SIGTERM');
    await new Promise<void>((r) => second.child.once('exit', () => r()));
  }, 150_000);
});
