import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { randomPort, startServerProcess, waitHealthy, type ServerProcess } from '../helpers/proof-process';

const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'sp-lock-'));
const children: ServerProcess[] = [];

/**
 * The server on a data directory holding the seeded template (the database a first start makes).
 * A first start on an empty directory (initdb, migrations and two years of demo history in the
 * server) took minutes on a busy two-core machine and says nothing of the lock: it is a proof of
 * its own, tests/proof/first-start.test.ts, which checks the lock file too.
 */
async function start(): Promise<ServerProcess> {
  const s = await startServerProcess({ port: await randomPort(), dataDir: dir });
  children.push(s);
  return s;
}

afterAll(async () => {
  for (const c of children) if (c.child.exitCode === null) c.child.kill('SIGKILL');
  await Promise.all(children.map((c) => c.exited));
  fs.rmSync(dir, { recursive: true, force: true });
});

describe('one process per data directory', { skip: !!process.env.TEST_DATABASE_URL }, () => {
  it('refuses a second server on the same DATA_DIR and leaves the first unharmed', async () => {
    const first = await start();
    await waitHealthy(first, 120_000);
    expect(await (await fetch(`${first.base}/api/health`)).json()).toMatchObject({ ok: true, db: 'pglite' });
    const lock = fs.readFileSync(path.join(dir, 'stillpoint.lock'), 'utf8').trim();
    expect(Number(lock)).toBe(first.child.pid);

    const second = await start();
    expect(await second.exited).toBe(3);
    expect(second.output()).toContain(`in use by another Stillpoint process (pid ${first.child.pid})`);

    await waitHealthy(first, 5000);
    first.child.kill('SIGTERM');
    expect(await first.exited).toBe(0);
    expect(fs.existsSync(path.join(dir, 'stillpoint.lock'))).toBe(false);
  }, 420_000);
});
