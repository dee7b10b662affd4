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
  /** PGlite only: the whole database as a tarball, to start in-memory databases from (test templates). */
  dump?(): Promise<Uint8Array>;
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

/** A second Stillpoint process on one PostgreSQL database (its sample sequence would collide). */
export class DatabaseInUseError extends DataDirLockedError {
  constructor(readonly holderPids: number[]) {
    super('', holderPids[0] ?? 0);
    this.message =
      `The PostgreSQL database is in use by another Stillpoint process (server backend pid ${holderPids.join(', ') || 'unknown'}). ` +
      'Stop that process first, or point DATABASE_URL at another database. Two processes on one database would hand out the same sample numbers.';
    this.name = 'DatabaseInUseError';
  }
}

/** Advisory lock key of a Stillpoint database ("STLP" as a number); advisory locks are per database. */
const DB_LOCK_KEY = 0x53544c50;

/**
 * Holds a session-level advisory lock on the database for this process's life, on a connection of
 * its own. The lock of a killed process goes when its connection does, which the server may take
 * a moment to notice, so a busy lock is retried for `waitMs` before giving up.
 */
async function lockDatabase(url: string, waitMs: number): Promise<() => Promise<void>> {
  const client = new pg.Client({ connectionString: url });
  await client.connect();
  const deadline = Date.now() + waitMs;
  for (;;) {
    const r = await client.query<{ ok: boolean }>('SELECT pg_try_advisory_lock($1) AS ok', [DB_LOCK_KEY]);
    if (r.rows[0]?.ok) break;
    if (Date.now() >= deadline) {
      const holders = await client.query<{ pid: number }>(
        `SELECT pid FROM pg_locks WHERE locktype = 'advisory' AND objid = $1 AND granted AND database = (SELECT oid FROM pg_database WHERE datname = current_database())`,
        [DB_LOCK_KEY],
      );
      await client.end();
      throw new DatabaseInUseError(holders.rows.map((h) => h.pid));
    }
    await new Promise((res) => setTimeout(res, 200));
  }
  client.on('error', () => {}); // a dropped lock connection surfaces on the pool's own queries
  return async () => {
    await client.end();
  };
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
  /** In-memory PGlite only: start from this tarball (see {@link Database.dump}) instead of an empty database. */
  template?: Uint8Array;
  /** PostgreSQL only: how long to wait for another process's hold on the database to go, ms (default 10 000). */
  lockWaitMs?: number;
  /** PGlite only: nice value of the database thread (DB_THREAD_NICE; see {@link WorkerInit.nice}). */
  threadNice?: number;
  /**
   * PostgreSQL only: told when the server ends an idle pooled connection (a restart, an admin's
   * pg_terminate_backend, a network cut). The pool drops that connection and opens a new one for
   * the next query; without a listener node-postgres throws the error and the process dies.
   */
  onIdleError?: (e: Error) => void;
}

/** Opens the database and applies the migrations in drizzle/ in-process. */
export async function openDatabase(opts: OpenOptions): Promise<Database> {
  if (opts.databaseUrl) {
    // One process per database (advisory lock) and per data directory (the sample journal lives there).
    const releaseDir = opts.dataDir ? lockDataDir(opts.dataDir) : undefined;
    let releaseDb: () => Promise<void>;
    try {
      releaseDb = await lockDatabase(opts.databaseUrl, opts.lockWaitMs ?? 10_000);
    } catch (e) {
      releaseDir?.();
      throw e;
    }
    const pool = new pg.Pool({ connectionString: opts.databaseUrl, max: 10 });
    // node-postgres: an idle client's error is emitted by the pool, and an 'error' event nobody
    // listens to is thrown (Pool docs, "error" event: always add a listener).
    pool.on('error', (e) => opts.onIdleError?.(e));
    const db = drizzlePg(pool, { schema }) as unknown as Db;
    const close = async () => {
      try {
        await pool.end();
        await releaseDb();
      } finally {
        releaseDir?.();
      }
    };
    try {
      await migratePg(drizzlePg(pool), { migrationsFolder: MIGRATIONS_DIR });
    } catch (e) {
      await close();
      throw e;
    }
    return {
      db,
      kind: 'postgres',
      exec: async (sql) => {
        await pool.query(sql);
      },
      close,
    };
  }
  // PGlite runs in a worker thread: on Node it would otherwise run every query on the event loop.
  // The data-directory lock stays with this process.
  const release = opts.dataDir ? lockDataDir(opts.dataDir) : undefined;
  let client: PgliteWorkerClient;
  try {
    client = await PgliteWorkerClient.start({
      ...(opts.dataDir ? { dataDir: path.join(path.resolve(opts.dataDir), 'pglite') } : opts.template ? { loadDataDir: opts.template.slice().buffer } : {}),
      ...(opts.threadNice === undefined ? {} : { nice: opts.threadNice }),
    });
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
    dump: () => client.dumpDataDir(),
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
