/**
 * `GET /api/health` that tells the truth: whether this server can store what it acknowledges.
 * It asks the database a trivial question (with a timeout), reads the sample writer's state, checks
 * that the journal's directory is writable and how much disk is free in DATA_DIR, and counts the
 * quarantined rows and damaged journal batches no admin or lead has reviewed yet.
 *
 * - `failing` (503): the database does not answer, the writer has been failing for longer than a
 *   short grace, the journal cannot be written, or the disk is nearly full.
 * - `degraded`: the product stores, but something needs a person. Quarantined rows or damaged
 *   batches not yet acknowledged answer 503 (they are evidence that was not stored as received);
 *   a writer retrying within its grace answers 200.
 * - `ok` (200).
 */
import fs from 'node:fs';
import type { BenchService } from './bench.service';

export type HealthStatus = 'ok' | 'degraded' | 'failing';

export interface HealthReport {
  ok: boolean;
  status: HealthStatus;
  /** Why the status is not `ok`, in words. */
  reasons: string[];
  db: 'pglite' | 'postgres';
  bench: 'sim' | 'serial';
  database: { ok: boolean; ms: number | null; error?: string };
  writer: {
    ok: boolean;
    pending: number;
    ackedSeq: number;
    storedSeq: number;
    quarantined: { total: number; unacknowledged: number };
    /** How long the current run of failed writes has lasted, ms; null while writes succeed. */
    failingForMs: number | null;
    lastFailure: { message: string; at: string } | null;
  };
  journal: { enabled: boolean; writable: boolean | null; damagedBatches: { total: number; unacknowledged: number }; error?: string };
  disk: { path: string; freeBytes: number; totalBytes: number; minFreeBytes: number; ok: boolean } | null;
}

/** Options of {@link createHealth}. */
export interface HealthOptions {
  /** Runs a trivial query (`SELECT 1`). */
  ping: () => Promise<unknown>;
  bench: Pick<BenchService, 'writer' | 'refreshStorage' | 'journalDir'>;
  db: 'pglite' | 'postgres';
  mode: 'sim' | 'serial';
  /** DATA_DIR, whose free space is checked; omit for an in-memory server. */
  dataDir?: string;
  /** Least free space in DATA_DIR before the check fails, bytes. Default 256 MiB (our own margin: hours of samples and a few uploads). */
  minFreeBytes?: number;
  /** How long the writer may keep failing before the check fails, ms. Default 10 s (about six backed-off retries). */
  writerGraceMs?: number;
  /** Longest wait for the database's answer, ms. Default 2 000. */
  dbTimeoutMs?: number;
  /** Free space of a directory (tests). Default fs.promises.statfs. */
  statfs?: (dir: string) => Promise<{ bavail: number; blocks: number; bsize: number }>;
  now?: () => number;
}

/** Rejects after `ms` unless `p` settles first. */
function within<T>(p: Promise<T>, ms: number, what: string): Promise<T> {
  let timer: NodeJS.Timeout | undefined;
  const timeout = new Promise<never>((_, reject) => {
    timer = setTimeout(() => reject(new Error(`${what} did not answer within ${ms} ms`)), ms);
  });
  return Promise.race([p, timeout]).finally(() => clearTimeout(timer));
}

const message = (e: unknown) => (e instanceof Error ? e.message : String(e));
const mib = (b: number) => `${Math.round(b / 1024 / 1024)} MiB`;

export function createHealth(o: HealthOptions) {
  const minFreeBytes = o.minFreeBytes ?? 256 * 1024 * 1024;
  const graceMs = o.writerGraceMs ?? 10_000;
  const dbTimeoutMs = o.dbTimeoutMs ?? 2000;
  const statfs = o.statfs ?? ((dir: string) => fs.promises.statfs(dir));
  const now = o.now ?? Date.now;

  return async function report(): Promise<HealthReport> {
    const failing: string[] = [];
    const attention: string[] = [];
    const notes: string[] = [];

    // The database answers a trivial query, and the review counts are read fresh if it does.
    const t0 = performance.now();
    let database: HealthReport['database'];
    try {
      await within(o.ping(), dbTimeoutMs, 'the database');
      database = { ok: true, ms: Math.round(performance.now() - t0) };
    } catch (e) {
      database = { ok: false, ms: null, error: message(e) };
      failing.push(`database: ${message(e)}`);
    }
    let storage: Awaited<ReturnType<typeof o.bench.refreshStorage>> | undefined;
    try {
      if (database.ok) storage = await within(o.bench.refreshStorage(), dbTimeoutMs, 'the quarantine count');
    } catch {
      /* the counts as last read below */
    }
    storage ??= { quarantine: { total: 0, unacknowledged: 0 }, damaged: [] };

    // The writer.
    const st = o.bench.writer.stats;
    const failingForMs = st.failingSinceMs === null ? null : Math.max(0, now() - st.failingSinceMs);
    const writerOk = failingForMs === null || failingForMs <= graceMs;
    if (!writerOk) failing.push(`sample writer: failing for ${Math.round(failingForMs! / 1000)} s (${st.lastFailure?.message ?? 'unknown error'}); ${st.pending} samples waiting`);
    else if (failingForMs !== null) notes.push(`sample writer: retrying after a failed write (${st.lastFailure?.message ?? 'unknown error'})`);
    const q = storage.quarantine;
    if (q.unacknowledged) attention.push(`sample writer: ${q.unacknowledged} sample(s) the database refused are quarantined and not yet acknowledged`);

    // The journal.
    let journal: HealthReport['journal'];
    const damagedTotal = storage.damaged.length;
    const damagedOpen = storage.damaged.filter((d) => !d.acknowledgedAt).length;
    if (o.bench.journalDir) {
      try {
        await fs.promises.access(o.bench.journalDir, fs.constants.W_OK);
        journal = { enabled: true, writable: true, damagedBatches: { total: damagedTotal, unacknowledged: damagedOpen } };
      } catch (e) {
        journal = { enabled: true, writable: false, damagedBatches: { total: damagedTotal, unacknowledged: damagedOpen }, error: message(e) };
        failing.push(`journal: not writable (${message(e)})`);
      }
    } else journal = { enabled: false, writable: null, damagedBatches: { total: 0, unacknowledged: 0 } };
    if (damagedOpen) attention.push(`journal: ${damagedOpen} damaged batch(es) set aside and not yet acknowledged`);

    // Free disk in DATA_DIR.
    let disk: HealthReport['disk'] = null;
    if (o.dataDir) {
      try {
        const s = await statfs(o.dataDir);
        const freeBytes = s.bavail * s.bsize;
        disk = { path: o.dataDir, freeBytes, totalBytes: s.blocks * s.bsize, minFreeBytes, ok: freeBytes >= minFreeBytes };
        if (!disk.ok) failing.push(`disk: ${mib(freeBytes)} free in DATA_DIR, below the ${mib(minFreeBytes)} needed`);
      } catch (e) {
        failing.push(`disk: cannot read the free space of DATA_DIR (${message(e)})`);
      }
    }

    const status: HealthStatus = failing.length ? 'failing' : attention.length || notes.length ? 'degraded' : 'ok';
    return {
      ok: failing.length === 0 && attention.length === 0,
      status,
      reasons: [...failing, ...attention, ...notes],
      db: o.db,
      bench: o.mode,
      database,
      writer: {
        ok: writerOk && !q.unacknowledged,
        pending: st.pending,
        ackedSeq: st.ackedSeq,
        storedSeq: st.storedSeq,
        quarantined: q,
        failingForMs,
        lastFailure: st.lastFailure ? { message: st.lastFailure.message, at: new Date(st.lastFailure.atMs).toISOString() } : null,
      },
      journal,
      disk,
    };
  };
}
