/**
 * One Stillpoint process per PostgreSQL database: a second open of the same database is refused
 * (after waiting out `lockWaitMs`) with DatabaseInUseError, which names the holder's backend pid;
 * once the first closes, the database opens again. Runs under `npm run test:postgres` (PGlite
 * has its data-directory lock, tested in data-dir-lock.test.ts).
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import pg from 'pg';
import { afterAll, describe, expect, it } from 'vitest';
import { DataDirLockedError, DatabaseInUseError, openDatabase, type Database } from '../../server/db/client';
import { freshPostgres } from '../helpers/test-server';

const opened: Database[] = [];
let drop: (() => Promise<void>) | undefined;
const dirs: string[] = [];
afterAll(async () => {
  for (const d of opened.splice(0)) await d.close().catch(() => undefined);
  await drop?.();
  for (const d of dirs) fs.rmSync(d, { recursive: true, force: true });
});

describe('one process per PostgreSQL database', { skip: !process.env.TEST_DATABASE_URL }, () => {
  it('refuses a second open of the same database, and opens again once the first has closed', async () => {
    const fresh = (await freshPostgres('sp_lock'))!;
    drop = fresh.drop;
    const first = await openDatabase({ databaseUrl: fresh.url });
    opened.push(first);
    const t0 = Date.now();
    const second = openDatabase({ databaseUrl: fresh.url, lockWaitMs: 600 });
    await expect(second).rejects.toBeInstanceOf(DatabaseInUseError);
    await expect(second).rejects.toThrow(/in use by another Stillpoint process \(server backend pid \d+\)/);
    expect(Date.now() - t0).toBeGreaterThanOrEqual(600); // it waited for the holder before giving up
    await first.close();
    opened.pop();
    const third = await openDatabase({ databaseUrl: fresh.url, lockWaitMs: 600 });
    opened.push(third);
    expect(third.kind).toBe('postgres');
  });

  it('lives through the server ending its idle pooled connections, and queries again on new ones', async () => {
    const fresh = (await freshPostgres('sp_lock'))!;
    const idleErrors: Error[] = [];
    const db = await openDatabase({ databaseUrl: fresh.url, onIdleError: (e) => idleErrors.push(e) });
    try {
      // Several pooled connections, then idle.
      await Promise.all(Array.from({ length: 4 }, () => db.exec('SELECT pg_sleep(0.05)')));
      const admin = new pg.Client({ connectionString: process.env.TEST_DATABASE_URL });
      await admin.connect();
      try {
        const { rows } = await admin.query(
          "SELECT count(pg_terminate_backend(pid))::int AS n FROM pg_stat_activity WHERE datname = $1 AND state = 'idle' AND query NOT ILIKE '%pg_advisory%'",
          [new URL(fresh.url).pathname.slice(1)],
        );
        expect(rows[0].n).toBeGreaterThan(0);
      } finally {
        await admin.end();
      }
      const until = Date.now() + 5000;
      while (!idleErrors.length && Date.now() < until) await new Promise((r) => setTimeout(r, 20));
      // Told, not thrown (an unhandled one would fail this run), and the next query gets a new connection.
      expect(idleErrors[0]?.message).toMatch(/terminating connection due to administrator command/);
      await db.exec('SELECT 1');
    } finally {
      await db.close();
      await fresh.drop();
    }
  });

  it('also locks the data directory, where the sample journal lives', async () => {
    const fresh = (await freshPostgres('sp_lock'))!;
    const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'sp-pglock-'));
    dirs.push(dir);
    const a = await openDatabase({ databaseUrl: fresh.url, dataDir: dir });
    try {
      expect(fs.existsSync(path.join(dir, 'stillpoint.lock'))).toBe(true);
      // Same directory, another database: refused by the directory lock.
      const other = (await freshPostgres('sp_lock'))!;
      try {
        await expect(openDatabase({ databaseUrl: other.url, dataDir: dir, lockWaitMs: 100 })).rejects.toBeInstanceOf(DataDirLockedError);
      } finally {
        await other.drop();
      }
    } finally {
      await a.close();
      await fresh.drop();
    }
    expect(fs.existsSync(path.join(dir, 'stillpoint.lock'))).toBe(false);
  });
});
