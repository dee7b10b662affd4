/**
 * The health report's verdicts, with the writer, the storage counts and the disk given by hand:
 * 503 (`ok: false`) when the product cannot store what it acknowledges (database silent, writer
 * failing past its grace, journal not writable, disk nearly full) or while quarantined rows or
 * damaged batches await review; a writer retrying within its grace is reported but answers 200.
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterEach, describe, expect, it } from 'vitest';
import type { DamagedBatch } from '../bench/journal';
import type { SampleWriterStats } from '../bench/sample-writer';
import { parseEnv } from '../env';
import { createHealth, type HealthOptions } from './health.service';

const dirs: string[] = [];
afterEach(() => {
  for (const d of dirs.splice(0)) fs.rmSync(d, { recursive: true, force: true });
});
function tmp(): string {
  const d = fs.mkdtempSync(path.join(os.tmpdir(), 'sp-health-'));
  dirs.push(d);
  return d;
}

const NOW = 1_800_000_000_000;
const GiB = 1024 ** 3;

function setUp(o: { stats?: Partial<SampleWriterStats>; quarantine?: { total: number; unacknowledged: number }; damaged?: DamagedBatch[]; freeBytes?: number; ping?: () => Promise<unknown>; journalDir?: string } = {}) {
  const stats = { ackedSeq: 10, storedSeq: 10, pending: 0, written: 10, batches: 1, lastBatchMs: 1, failures: 0, replayed: 0, quarantined: 0, damagedBatches: 0, consecutiveFailures: 0, failingSinceMs: null, lastFailure: null, ...o.stats } as SampleWriterStats;
  const dataDir = tmp();
  const opts: HealthOptions = {
    ping: o.ping ?? (async () => 1),
    bench: {
      writer: { stats } as HealthOptions['bench']['writer'],
      journalDir: o.journalDir ?? dataDir,
      refreshStorage: async () => ({ quarantine: o.quarantine ?? { total: 0, unacknowledged: 0 }, damaged: o.damaged ?? [] }),
    },
    db: 'pglite',
    mode: 'sim',
    dataDir,
    minFreeBytes: GiB,
    writerGraceMs: 10_000,
    dbTimeoutMs: 50,
    statfs: async () => ({ bavail: (o.freeBytes ?? 100 * GiB) / 4096, blocks: (200 * GiB) / 4096, bsize: 4096 }),
    now: () => NOW,
  };
  return createHealth(opts);
}

describe('health report', () => {
  it('is ok when everything stores', async () => {
    const h = await setUp()();
    expect(h).toMatchObject({ ok: true, status: 'ok', reasons: [], database: { ok: true }, writer: { ok: true }, journal: { writable: true }, disk: { ok: true, freeBytes: 100 * GiB } });
  });

  it('fails (503) when the disk of DATA_DIR is below the threshold', async () => {
    const h = await setUp({ freeBytes: 100 * 1024 * 1024 })();
    expect(h).toMatchObject({ ok: false, status: 'failing', disk: { ok: false } });
    expect(h.reasons[0]).toMatch(/^disk: 100 MiB free in DATA_DIR, below the 1024 MiB needed/);
  });

  it('reads the real free space of DATA_DIR (fs.statfs) and fails against an unreachable threshold', async () => {
    const dir = tmp();
    const h = await createHealth({ ping: async () => 1, bench: { writer: { stats: { pending: 0, failingSinceMs: null } } as never, journalDir: dir, refreshStorage: async () => ({ quarantine: { total: 0, unacknowledged: 0 }, damaged: [] }) }, db: 'pglite', mode: 'sim', dataDir: dir, minFreeBytes: Number.MAX_SAFE_INTEGER })();
    expect(h.disk!.freeBytes).toBeGreaterThan(0);
    expect(h).toMatchObject({ ok: false, status: 'failing' });
  });

  it('reports a writer retrying within its grace (200) and fails once it has failed for longer', async () => {
    const lastFailure = { message: 'Connection terminated unexpectedly', atMs: NOW - 1000 };
    const within = await setUp({ stats: { failingSinceMs: NOW - 3000, lastFailure, pending: 40 } })();
    expect(within).toMatchObject({ ok: true, status: 'degraded', writer: { ok: true, failingForMs: 3000, lastFailure: { message: lastFailure.message } } });
    expect(within.reasons[0]).toMatch(/retrying/);
    const past = await setUp({ stats: { failingSinceMs: NOW - 30_000, lastFailure, pending: 400 } })();
    expect(past).toMatchObject({ ok: false, status: 'failing', writer: { ok: false } });
    expect(past.reasons[0]).toBe('sample writer: failing for 30 s (Connection terminated unexpectedly); 400 samples waiting');
  });

  it('answers 503 while quarantined rows or damaged batches await review, and not once they are acknowledged', async () => {
    const q = await setUp({ quarantine: { total: 2, unacknowledged: 2 } })();
    expect(q).toMatchObject({ ok: false, status: 'degraded', writer: { ok: false, quarantined: { unacknowledged: 2 } } });
    const batch: DamagedBatch = { file: 'samples.journal.damaged-x-0', offset: 0, bytes: 10, reason: 'checksum mismatch', at: new Date(NOW).toISOString() };
    const d = await setUp({ damaged: [batch] })();
    expect(d).toMatchObject({ ok: false, status: 'degraded', journal: { damagedBatches: { total: 1, unacknowledged: 1 } } });
    const reviewed = await setUp({ quarantine: { total: 2, unacknowledged: 0 }, damaged: [{ ...batch, acknowledgedAt: new Date(NOW).toISOString() }] })();
    expect(reviewed).toMatchObject({ ok: true, status: 'ok' });
  });

  it('fails when the database does not answer in time, or the journal directory is not writable', async () => {
    const silent = await setUp({ ping: () => new Promise(() => {}) })();
    expect(silent).toMatchObject({ ok: false, status: 'failing', database: { ok: false, error: 'the database did not answer within 50 ms' } });
    const h = await setUp({ journalDir: path.join(tmp(), 'missing') })();
    expect(h).toMatchObject({ ok: false, status: 'failing', journal: { writable: false } });
  });

  it('takes its database timeout from HEALTH_DB_TIMEOUT_MS: 2000 ms unless set, 100 ms to a minute', () => {
    expect(parseEnv({}).HEALTH_DB_TIMEOUT_MS).toBe(2000);
    expect(parseEnv({ HEALTH_DB_TIMEOUT_MS: '20000' }).HEALTH_DB_TIMEOUT_MS).toBe(20_000);
    for (const bad of ['50', '60001', '1.5', 'soon']) expect(() => parseEnv({ HEALTH_DB_TIMEOUT_MS: bad }), bad).toThrow(/HEALTH_DB_TIMEOUT_MS/);
  });
});
