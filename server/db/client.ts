import fs from 'node:fs';
import path from 'node:path';
import type { PGlite } from '@electric-sql/pglite';
import { drizzle as drizzlePglite } from 'drizzle-orm/pglite';
import { migrate as migratePglite } from 'drizzle-orm/pglite/migrator';
import { drizzle as drizzlePg } from 'drizzle-orm/node-postgres';
import { migrate as migratePg } from 'drizzle-orm/node-postgres/migrator';
import type { PgDatabase, PgQueryResultHKT } from 'drizzle-orm/pg-core';
import pg from 'pg';
import { PgliteWorkerClient } from './pglite-worker-client';
import * as schema from './schema';

export type Db = PgDatabase<PgQueryResultHKT, typeof schema>;

export interface Database {
  db: Db;
  kind: 'pglite' | 'postgres';
  /** Runs raw SQL (used by tests and maintenance; services go through repositories). */
  exec(sql: string): Promise<void>;
  /** Checkpoints and closes the database and releases the data-directory lock. */
  close(): Promise<void>;
}

export const MIGRATIONS_DIR = path.resolve(import.meta.dirname, '../../drizzle');

export class DataDirLockedError extends Error {
  constructor(
    readonly lockPath: string,
    readonly holderPid: number,
  ) {
    super(
      `The data directory is in use by another Stillpoint process (pid ${holderPid}); lock file ${lockPath}. ` +
        'Stop that process first, or set DATA_DIR to another directory. Two processes on one PGlite directory corrupt it.',
    );
    this.name = 'DataDirLockedError';
  }
}

/** Lock files this process holds, so a second open in the same process is refused too. */
const heldLocks = new Set<string>();

function pidAlive(pid: number): boolean {
  try {
    process.kill(pid, 0);
    return true;
  } catch (e) {
    return (e as NodeJS.ErrnoException).code === 'EPERM';
  }
}

/**
 * Takes an exclusive lock on a data directory by creating `stillpoint.lock` with O_EXCL.
 * A lock left by a dead process (crash, SIGKILL) is taken over; a live holder is refused.
 * @returns a function that releases the lock.
 */
export function lockDataDir(dir: string): () => void {
  fs.mkdirSync(dir, { recursive: true });
  const lockPath = path.join(path.resolve(dir), 'stillpoint.lock');
  for (let attempt = 0; attempt < 2; attempt++) {
    try {
      const fd = fs.openSync(lockPath, 'wx');
      fs.writeSync(fd, `${process.pid}\n`);
      fs.fsyncSync(fd);
      fs.closeSync(fd);
      heldLocks.add(lockPath);
      let released = false;
      return () => {
        if (released) return;
        released = true;
        heldLocks.delete(lockPath);
        try {
          if (fs.readFileSync(lockPath, 'utf8').trim() === String(process.pid)) fs.unlinkSync(lockPath);
        } catch {
          /* already gone */
        }
      };
    } catch (e) {
      if ((e as NodeJS.ErrnoException).code !== 'EEXIST') throw e;
      const holder = Number.parseInt(fs.readFileSync(lockPath, 'utf8').trim(), 10);
      const ours = holder === process.pid && heldLocks.has(lockPath);
      if (Number.isFinite(holder) && (ours || (holder !== process.pid && pidAlive(holder)))) {
        throw new DataDirLockedError(lockPath, holder);
      }
      // Stale lock from a process that is gone (or an earlier process that had our pid): take it over.
      fs.rmSync(lockPath, { force: true });
    }
  }
  throw new Error(`Could not take the lock in ${dir}`);
}

export interface OpenOptions {
  /** postgres:// URL; when set, PGlite is not used. */
  databaseUrl?: string;
  /** PGlite data directory; omit for an in-memory database (tests). */
  dataDir?: string;
}

/** Opens the database and applies the migrations in drizzle/ in-process. */
export async function openDatabase(opts: OpenOptions): Promise<Database> {
  if (opts.databaseUrl) {
    const pool = new pg.Pool({ connectionString: opts.databaseUrl, max: 10 });
    const db = drizzlePg(pool, { schema }) as unknown as Db;
    await migratePg(drizzlePg(pool), { migrationsFolder: MIGRATIONS_DIR });
    return {
      db,
      kind: 'postgres',
      exec: async (sql) => {
        await pool.query(sql);
      },
      close: async () => {
        await pool.end();
      },
    };
  }
  // PGlite runs in a worker thread: on Node it would otherwise run every query on the event loop.
  // The data-directory lock stays with this process.
  const release = opts.dataDir ? lockDataDir(opts.dataDir) : undefined;
  let client: PgliteWorkerClient;
  try {
    client = await PgliteWorkerClient.start(opts.dataDir ? { dataDir: path.join(path.resolve(opts.dataDir), 'pglite') } : {});
  } catch (e) {
    release?.();
    throw e;
  }
  // The worker client has the part of PGlite's interface that drizzle-orm/pglite uses (query with
  // rowMode and identity parsers, transaction).
  const asPglite = client as unknown as PGlite;
  const db = drizzlePglite(asPglite, { schema }) as unknown as Db;
  try {
    await migratePglite(drizzlePglite(asPglite), { migrationsFolder: MIGRATIONS_DIR });
  } catch (e) {
    await client.close();
    release?.();
    throw e;
  }
  return {
    db,
    kind: 'pglite',
    exec: async (sql) => {
      await client.exec(sql);
    },
    close: async () => {
      try {
        await client.close();
      } finally {
        release?.();
      }
    },
  };
}

/** The PGlite worker client behind a drizzle database, when it is one (repositories use its fast paths). */
export function pgliteWorkerOf(db: Db): PgliteWorkerClient | undefined {
  const client = (db as unknown as { $client?: unknown }).$client;
  return client instanceof PgliteWorkerClient ? client : undefined;
}
