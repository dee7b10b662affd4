/**
 * First start: the production server (the prebuilt bundle of server/main.ts) on an empty PGlite
 * data directory, or on an empty PostgreSQL database (TEST_DATABASE_URL), migrates it in-process,
 * seeds the demo site with its two years of history, takes the data-directory lock, answers
 * health and signs the demo users in. Every other test starts from the template made by the same
 * migrations and seed (tests/helpers/db-template.ts); this one runs them inside the server, as
 * `npm start` does on a new machine. Minutes on a busy two-core machine, hence a proof
 * (`.ci/run`, `npm run test:proof`), not a suite of `npm test`; `data-dir-lock.test.ts` starts
 * an empty directory without the demo (SEED_DEMO=0) there.
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { ApiClient, demoEmail } from '../helpers/test-server';
import { freshPostgresUrl, randomPort, startServerProcess, waitHealthy, type ServerProcess } from '../helpers/proof-process';

const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'sp-first-start-'));
let server: ServerProcess | undefined;
let pgdb: Awaited<ReturnType<typeof freshPostgresUrl>>;

afterAll(async () => {
  if (server && server.child.exitCode === null) server.child.kill('SIGKILL');
  await server?.exited;
  await pgdb?.drop();
  fs.rmSync(dir, { recursive: true, force: true });
});

describe('first start on an empty database', () => {
  it('migrates, seeds the demo site with its history, and serves it', async () => {
    pgdb = await freshPostgresUrl('sp_first_start');
    server = await startServerProcess({ port: await randomPort(), dataDir: dir, databaseUrl: pgdb?.url, firstStart: true });
    await waitHealthy(server, 300_000);
    expect(await (await fetch(`${server.base}/api/health`)).json()).toMatchObject({ ok: true, db: pgdb ? 'postgres' : 'pglite' });
    if (!pgdb) expect(Number(fs.readFileSync(path.join(dir, 'stillpoint.lock'), 'utf8').trim())).toBe(server.child.pid);

    const lead = new ApiClient(server.base);
    await lead.login(demoEmail('lead'));
    const approved = (await lead.get('/api/records?status=approved')).body.items as { tag: string }[];
    expect(approved.filter((r) => r.tag === 'FT-101')).toHaveLength(4);
    const seeded = (await lead.get('/api/audit?entity=site&limit=1000')).body.items.find((e: { action: string }) => e.action === 'demo.history-seeded');
    expect((seeded.after as { samples: number }).samples).toBeGreaterThan(10_000);
    const tech = new ApiClient(server.base);
    await tech.login(demoEmail('tech'));
    expect((await tech.get('/api/jobs')).body.items.some((j: { tag: string }) => j.tag === 'FT-101')).toBe(true);

    server.child.kill('SIGTERM');
    expect(await server.exited).toBe(0);
    if (!pgdb) expect(fs.existsSync(path.join(dir, 'stillpoint.lock'))).toBe(false);
  }, 420_000);
});
