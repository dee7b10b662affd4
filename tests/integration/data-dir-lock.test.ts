import { spawn, type ChildProcess } from 'node:child_process';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';

const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'sp-lock-'));
const children: ChildProcess[] = [];

function start(port: number) {
  const child = spawn(process.execPath, ['--import', 'tsx', 'server/main.ts'], {
    env: { ...process.env, NODE_ENV: 'production', DATA_DIR: dir, PORT: String(port), HOST: '127.0.0.1', LOG_LEVEL: 'warn', DATABASE_URL: '' },
    stdio: ['ignore', 'pipe', 'pipe'],
  });
  children.push(child);
  let out = '';
  child.stdout!.on('data', (d) => (out += d));
  child.stderr!.on('data', (d) => (out += d));
  const exited = new Promise<number | null>((resolve) => child.on('exit', (code) => resolve(code)));
  return { child, exited, output: () => out };
}

async function waitHealthy(port: number, ms = 90_000) {
  const until = Date.now() + ms;
  while (Date.now() < until) {
    try {
      const r = await fetch(`http://127.0.0.1:${port}/api/health`);
      if (r.ok) return r.json();
    } catch {
      /* not yet */
    }
    await new Promise((r) => setTimeout(r, 250));
  }
  throw new Error('server did not become healthy');
}

afterAll(() => {
  for (const c of children) if (c.exitCode === null) c.kill('SIGKILL');
  fs.rmSync(dir, { recursive: true, force: true });
});

describe('one process per data directory', { skip: !!process.env.TEST_DATABASE_URL }, () => {
  it('refuses a second server on the same DATA_DIR and leaves the first unharmed', async () => {
    const port = 20000 + Math.floor(Math.random() * 20000);
    const first = start(port);
    expect(await waitHealthy(port)).toMatchObject({ ok: true, db: 'pglite' });
    const lock = fs.readFileSync(path.join(dir, 'stillpoint.lock'), 'utf8').trim();
    expect(Number(lock)).toBe(first.child.pid);

    const second = start(port + 1);
    const code = await second.exited;
    expect(code).toBe(3);
    expect(second.output()).toContain(`in use by another Stillpoint process (pid ${first.child.pid})`);

    expect(await waitHealthy(port, 5000)).toMatchObject({ ok: true });
    first.child.kill('SIGTERM');
    expect(await first.exited).toBe(0);
    expect(fs.existsSync(path.join(dir, 'stillpoint.lock'))).toBe(false);
  }, 180_000);
});
