/**
 * Durability: a server killed with SIGKILL while capturing restarts with every acknowledged
 * sample present, and its sequence numbers continue after the last one stored.
 */
import { spawn, type ChildProcess } from 'node:child_process';
import fs from 'node:fs';
import net from 'node:net';
import os from 'node:os';
import path from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { ApiClient, demoEmail } from '../helpers/test-server';
import { streamClient, until } from './runs-helpers';

const root = path.resolve(import.meta.dirname, '../..');
const dataDir = fs.mkdtempSync(path.join(os.tmpdir(), 'stillpoint-durability-'));
const children: ChildProcess[] = [];

async function freePort(): Promise<number> {
  return new Promise((resolve) => {
    const s = net.createServer();
    s.listen(0, '127.0.0.1', () => {
      const port = (s.address() as net.AddressInfo).port;
      s.close(() => resolve(port));
    });
  });
}

async function startServer(port: number): Promise<{ child: ChildProcess; url: string }> {
  const child = spawn(process.execPath, ['--import', 'tsx', 'server/main.ts'], {
    cwd: root,
    env: { ...process.env, NODE_ENV: 'test', PORT: String(port), HOST: '127.0.0.1', DATA_DIR: dataDir, BENCH: 'sim', HOLD_SECONDS: '1', LOG_LEVEL: 'warn' },
    stdio: ['ignore', 'ignore', 'pipe'],
  });
  let stderr = '';
  child.stderr!.on('data', (d) => (stderr += String(d)));
  children.push(child);
  const url = `http://127.0.0.1:${port}`;
  await until(
    async () => {
      if (child.exitCode !== null) throw new Error(`server exited ${child.exitCode}: ${stderr}`);
      try {
        return (await fetch(`${url}/api/health`)).ok;
      } catch {
        return false;
      }
    },
    60_000,
    'server up',
  );
  return { child, url };
}

afterAll(() => {
  for (const c of children) if (c.exitCode === null) c.kill('SIGKILL');
  fs.rmSync(dataDir, { recursive: true, force: true });
});

describe('durability: SIGKILL during capture', () => {
  it('keeps every acknowledged sample and continues the sequence after a restart', async () => {
    const port = await freePort();
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
