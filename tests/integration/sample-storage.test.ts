/**
 * The storage edge of the sample path on a real database (PGlite through the migrations): a row
 * the database refuses (a NUL in the raw line, injected straight into the hub, behind the edge
 * check of forwarded lines) or cannot hold unaltered (a lone surrogate) is quarantined with its
 * reason; the rows after it are stored, the journal truncates again, and a journal that holds such
 * a row replays at start-up without throwing.
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, afterEach, beforeAll, describe, expect, it } from 'vitest';
import { openDatabase, type Database } from '../../server/db/client';
import { sampleRepository, type SampleRepository } from '../../server/db/repositories/sample.repository';
import { BenchHub } from '../../server/bench/hub';
import { SampleJournal, type JournalRow } from '../../server/bench/journal';
import { portRow } from './journal-helpers';
import { isRowRefusal, SampleWriter } from '../../server/bench/sample-writer';

let database: Database;
let repo: SampleRepository;
beforeAll(async () => {
  database = await openDatabase({});
  repo = sampleRepository(database.db);
}, 120_000);
afterAll(async () => {
  await database?.close();
});

const dirs: string[] = [];
afterEach(async () => {
  for (const d of dirs.splice(0)) fs.rmSync(d, { recursive: true, force: true });
  await database.exec('DELETE FROM samples; DELETE FROM sample_quarantine;');
});
function journalDir(): string {
  const d = fs.mkdtempSync(path.join(os.tmpdir(), 'sp-storage-'));
  dirs.push(d);
  return d;
}

/** A writer over the real repository, fed by a real hub. */
async function rig(o: { dir?: string; rotateBytes?: number } = {}) {
  const journal = new SampleJournal(o.dir ?? journalDir());
  const errors: unknown[] = [];
  const writer = new SampleWriter({ sink: repo, journal, flushMs: 60_000, rotateBytes: o.rotateBytes, onError: (e) => errors.push(e) });
  const hub = new BenchHub({ firstSeq: await writer.start() });
  hub.subscribe('sample-writer', writer.consume);
  const put = (raw: string) => hub.ingestSample({ benchId: 'bench-1', device: 'current', raw, value: null, unit: null });
  return { journal, writer, hub, put, errors };
}

/** Flushes until nothing is pending, at most `rounds` times (a writer stuck on a row never gets there). */
async function flushAll(w: SampleWriter, hub: BenchHub, rounds = 6): Promise<void> {
  await hub.drain();
  for (let i = 0; i < rounds && w.stats.pending > 0; i++) await w.flush();
  await w.flush();
}

const seqsStored = async () => (await repo.after(0, 1000)).map((r) => Number(r.seq));

describe('a row the database refuses', () => {
  it('is quarantined with its reason, and the samples after it are stored (finding 1)', async () => {
    const { writer, hub, put, errors } = await rig();
    const before = put('+4.00000E-03');
    const bad = put('A\u0000B');
    const after = [put('+5.00000E-03'), put('+6.00000E-03')];
    await flushAll(writer, hub);
    expect(await seqsStored()).toEqual([before.seq, ...after.map((e) => e.seq)]);
    expect(writer.stats.pending).toBe(0);
    expect(writer.stats.storedSeq).toBe(after[1]!.seq);
    const q = await repo.quarantine.list(10);
    expect(q).toHaveLength(1);
    expect(q[0]).toMatchObject({ seq: bad.seq, benchId: 'bench-1', device: 'current', raw: 'A\u0000B' });
    expect(q[0]!.reason).toMatch(/22021/);
    expect(q[0]!.rawJson).toBe('"A\\u0000B"'); // the JSON string form: storable and lossless
    expect(writer.stats.quarantined).toBe(1);
    expect(errors).toHaveLength(0); // a refusal is handled, not a failure that retries
    await writer.stop();
  });

  it('quarantines a lone surrogate rather than storing it altered', async () => {
    const { writer, hub, put } = await rig();
    const bad = put('A\ud800B');
    const good = put('+7.00000E-03');
    await flushAll(writer, hub);
    expect(await seqsStored()).toEqual([good.seq]);
    const q = await repo.quarantine.list(10);
    expect(q.map((r) => [r.seq, r.raw])).toEqual([[bad.seq, 'A\ud800B']]);
    expect(q[0]!.reason).toMatch(/surrogate/);
    await writer.stop();
  });

  it('isolates one refused row in a large batch and stores every other row', async () => {
    const { writer, hub, put } = await rig();
    const all = Array.from({ length: 500 }, (_, i) => put(i === 377 ? 'x\u0000' : `+${i}`));
    await flushAll(writer, hub);
    expect(await repo.count()).toBe(499);
    expect((await repo.quarantine.list(10)).map((r) => r.seq)).toEqual([all[377]!.seq]);
    await writer.stop();
  });

  it('lets the journal truncate again once the refused row is quarantined', async () => {
    const { writer, hub, put, journal } = await rig({ rotateBytes: 1 });
    put('A\u0000B');
    put('+1');
    await flushAll(writer, hub);
    expect(journal.size).toBeGreaterThan(0);
    put('+2');
    await flushAll(writer, hub);
    // The batch before was stored or quarantined, so the journal was emptied before this one.
    expect((await journal.read()).map((r) => r.raw)).toEqual(['+2']);
    await writer.stop();
  });

  it('replays a journal that holds a refused row at start-up without throwing (finding 1)', async () => {
    const dir = journalDir();
    const j = new SampleJournal(dir);
    await j.open();
    const row = (seq: number, raw: string) => portRow(seq, raw, 1.7e12 + seq);
    await j.append([row(1, '+1'), row(2, 'A\u0000B'), row(3, '+3')]);
    await j.close();
    const writer = new SampleWriter({ sink: repo, journal: new SampleJournal(dir), flushMs: 60_000 });
    expect(await writer.start()).toBe(4);
    expect(await seqsStored()).toEqual([1, 3]);
    expect((await repo.quarantine.list(10)).map((r) => r.seq)).toEqual([2]);
    expect(writer.stats.replayed).toBe(3); // two stored, one set aside
    expect(writer.stats.quarantined).toBe(1);
    await writer.stop();
    // A second start finds the quarantined row accounted for: nothing is replayed twice.
    const again = new SampleWriter({ sink: repo, journal: new SampleJournal(dir), flushMs: 60_000 });
    expect(await again.start()).toBe(4);
    expect(await repo.quarantine.count()).toEqual({ total: 1, unacknowledged: 1 });
    await again.stop();
  });
});

describe('a transient failure', () => {
  it('is retried and never quarantined', async () => {
    let failNext = 2;
    const sink = {
      ...repo,
      prepare: undefined,
      insertPrepared: undefined,
      insertMany: async (rows: JournalRow[]) => {
        if (failNext-- > 0) throw Object.assign(new Error('Connection terminated unexpectedly'), {});
        return repo.insertMany(rows);
      },
    };
    const errors: unknown[] = [];
    const writer = new SampleWriter({ sink, journal: new SampleJournal(journalDir()), flushMs: 60_000, onError: (e) => errors.push(e) });
    const hub = new BenchHub({ firstSeq: await writer.start() });
    hub.subscribe('w', writer.consume);
    hub.ingestSample({ benchId: 'bench-1', device: 'current', raw: '+1', value: 1, unit: 'mA' });
    await flushAll(writer, hub);
    expect(errors).toHaveLength(2);
    expect(writer.stats.lastFailure).toMatchObject({ message: 'Connection terminated unexpectedly' });
    expect(await repo.count()).toBe(1);
    expect(await repo.quarantine.count()).toEqual({ total: 0, unacknowledged: 0 });
    await writer.stop();
  });

  it('is told apart from a refusal by its SQLSTATE', () => {
    expect(isRowRefusal(Object.assign(new Error('x'), { code: '22021' }))).toBe(true);
    expect(isRowRefusal(Object.assign(new Error('x'), { code: '22P02' }))).toBe(true);
    expect(isRowRefusal(new Error('wrapped', { cause: Object.assign(new Error('x'), { code: '22001' }) }))).toBe(true);
    expect(isRowRefusal(Object.assign(new Error('x'), { code: '08006' }))).toBe(false); // connection failure
    expect(isRowRefusal(Object.assign(new Error('x'), { code: '57P01' }))).toBe(false); // admin shutdown
    expect(isRowRefusal(Object.assign(new Error('x'), { code: '53100' }))).toBe(false); // disk full
    expect(isRowRefusal(Object.assign(new Error('connect ECONNREFUSED'), { code: 'ECONNREFUSED' }))).toBe(false);
    expect(isRowRefusal(new Error('worker busy'))).toBe(false);
  });
});
