/**
 * The sample writer's two overlapping stages, with a real journal on disk and a sink whose writes
 * the test releases by hand: acknowledgement after the journal sync, at most one database write in
 * flight, bounded batches, retry after a failed write, and a journal truncated only when every
 * row in it is in the database.
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterEach, describe, expect, it } from 'vitest';
import type { HubEntry } from './hub';
import { SampleJournal, type JournalRow } from './journal';
import { SampleWriter, type SampleSink } from './sample-writer';

const dirs: string[] = [];
afterEach(() => {
  for (const d of dirs.splice(0)) fs.rmSync(d, { recursive: true, force: true });
});
function journalIn(): SampleJournal {
  const d = fs.mkdtempSync(path.join(os.tmpdir(), 'sp-writer-'));
  dirs.push(d);
  return new SampleJournal(d);
}

function entries(from: number, count: number): HubEntry[] {
  return Array.from({ length: count }, (_, i) => ({
    kind: 'sample',
    seq: from + i,
    benchId: 'b1',
    device: i % 2 ? 'current' : 'pressure',
    runId: null,
    raw: `+${from + i}`,
    value: from + i,
    unit: 'mA',
    wallMs: 1.7e12 + from + i,
    monoMs: from + i,
    source: { kind: 'port', id: 'b1' },
    clientWallMs: null,
  })) as unknown as HubEntry[];
}

/** A sink whose writes wait until the test releases them, and can be told to fail. */
class GatedSink implements SampleSink {
  stored = new Map<number, JournalRow>();
  batches: number[][] = [];
  inFlight = 0;
  maxInFlight = 0;
  failNext = 0;
  private gates: (() => void)[] = [];
  async insertMany(rows: JournalRow[]): Promise<void> {
    this.inFlight++;
    this.maxInFlight = Math.max(this.maxInFlight, this.inFlight);
    await new Promise<void>((r) => this.gates.push(r));
    this.inFlight--;
    if (this.failNext > 0) {
      this.failNext--;
      throw new Error('disk full (test)');
    }
    this.batches.push(rows.map((r) => r.seq));
    for (const r of rows) this.stored.set(r.seq, r);
  }
  async maxSeq(): Promise<number> {
    return Math.max(0, ...this.stored.keys());
  }
  async existingSeqs(from: number, to: number): Promise<Set<number>> {
    return new Set([...this.stored.keys()].filter((s) => s >= from && s <= to));
  }
  /** Lets every waiting write finish, as often as new ones arrive, until `done()` holds. */
  async releaseUntil(done: () => boolean, what: string): Promise<void> {
    const end = Date.now() + 5000;
    while (!done()) {
      if (Date.now() > end) throw new Error(`timed out waiting for ${what}`);
      for (const g of this.gates.splice(0)) g();
      await new Promise((r) => setTimeout(r, 2));
    }
  }
  get waiting(): number {
    return this.gates.length;
  }
}

const tick = () => new Promise((r) => setTimeout(r, 20));
/** Waits (polling) until `done()` holds; journal syncs take their time on a loaded machine. */
async function until(done: () => boolean, what: string): Promise<void> {
  const end = Date.now() + 5000;
  while (!done()) {
    if (Date.now() > end) throw new Error(`timed out waiting for ${what}`);
    await new Promise((r) => setTimeout(r, 2));
  }
}

describe('SampleWriter', () => {
  it('acknowledges after the journal sync, before the database write, and bounds each batch', async () => {
    const sink = new GatedSink();
    const w = new SampleWriter({ sink, journal: journalIn(), flushMs: 10_000, batchRows: 1_000_000, maxBatchRows: 300 });
    expect(await w.start()).toBe(1);
    w.consume(entries(1, 1000));
    const done = w.flush();
    await tick();
    await until(() => w.stats.ackedSeq === 300, 'the first batch journaled');
    // The first batch is journaled and acknowledged, but not stored: its database write is held.
    expect(w.stats.ackedSeq).toBe(300);
    expect(w.stats.storedSeq).toBe(0);
    expect(sink.waiting).toBe(1);
    await sink.releaseUntil(() => w.stats.storedSeq === 300, 'first batch');
    await done;
    // flush() writes one bounded batch; the rest waits for the next flush.
    expect(w.stats.pending).toBe(700);
    const rest = (async () => {
      while (w.stats.pending || w.stats.storedSeq < 1000) await w.flush();
    })();
    await sink.releaseUntil(() => w.stats.storedSeq === 1000, 'all batches');
    await rest;
    expect(sink.batches.map((b) => b.length)).toEqual([300, 300, 300, 100]);
    expect([...sink.stored.keys()].sort((a, b) => a - b)).toEqual(Array.from({ length: 1000 }, (_, i) => i + 1));
    await w.stop();
  });

  it('journals the next batch while the database writes the previous one, never two writes at once', async () => {
    const sink = new GatedSink();
    const w = new SampleWriter({ sink, journal: journalIn(), flushMs: 10_000, batchRows: 100, maxBatchRows: 100 });
    await w.start();
    w.consume(entries(1, 100)); // starts a batch at once (batchRows)
    await tick();
    w.consume(entries(101, 100));
    // Batch 2 is acknowledged (journaled) while batch 1's database write is still held.
    await until(() => w.stats.ackedSeq === 200, 'batch 2 journaled');
    expect(w.stats.ackedSeq).toBe(200);
    expect(w.stats.storedSeq).toBe(0);
    expect(sink.waiting).toBe(1);
    await sink.releaseUntil(() => w.stats.storedSeq === 200, 'both batches');
    expect(sink.maxInFlight).toBe(1);
    expect(sink.batches).toHaveLength(2);
    await w.stop();
  });

  it('puts a batch that failed to store back and stores it on the next flush', async () => {
    const sink = new GatedSink();
    const errors: unknown[] = [];
    const w = new SampleWriter({ sink, journal: journalIn(), flushMs: 10_000, onError: (e) => errors.push(e) });
    await w.start();
    sink.failNext = 1;
    w.consume(entries(1, 50));
    const first = w.flush();
    await sink.releaseUntil(() => w.stats.failures === 1, 'the failure');
    await first;
    expect(errors).toHaveLength(1);
    expect(w.stats.ackedSeq).toBe(50); // still durable: it is in the journal
    expect(w.stats.storedSeq).toBe(0);
    expect(w.stats.pending).toBe(50);
    const second = w.flush();
    await sink.releaseUntil(() => w.stats.storedSeq === 50, 'the retry');
    await second;
    expect(sink.stored.size).toBe(50);
    await w.stop();
  });

  it('truncates the journal only once every journaled row is in the database; a restart replays what the database lacks', async () => {
    const sink = new GatedSink();
    const journal = journalIn();
    const w = new SampleWriter({ sink, journal, flushMs: 10_000, batchRows: 1_000_000, maxBatchRows: 100, rotateBytes: 1 });
    await w.start();
    w.consume(entries(1, 100));
    const a = w.flush();
    await tick();
    expect(journal.size).toBeGreaterThan(1);
    // The next batch finds the journal over its size but batch 1 not stored yet: it must wait, not truncate.
    w.consume(entries(101, 100));
    const b = w.flush();
    await tick();
    expect((await journal.read()).map((r) => r.seq)).toContain(1);
    await sink.releaseUntil(() => w.stats.storedSeq === 200, 'both batches');
    await Promise.all([a, b]);
    // Batch 1 was stored before batch 2 was journaled into the truncated file.
    expect((await journal.read()).map((r) => r.seq)).toEqual(Array.from({ length: 100 }, (_, i) => 101 + i));
    await w.stop();

    // A restart against a database that lacks batch 2 replays it from the journal.
    for (let s = 101; s <= 200; s++) sink.stored.delete(s);
    const again = new SampleWriter({ sink, journal: new SampleJournal(path.dirname(journal.file)), flushMs: 10_000 });
    const started = again.start();
    await sink.releaseUntil(() => sink.stored.size === 200, 'the replay');
    expect(await started).toBe(201);
    expect(again.stats.replayed).toBe(100);
    await again.stop();
  });
  it('whenAcked resolves once the seq is durable and rejects waiters left when the writer stops', async () => {
    const sink = new GatedSink();
    const w = new SampleWriter({ sink, journal: journalIn(), flushMs: 10_000 });
    await w.start();
    w.consume(entries(1, 10));
    let acked = false;
    const ten = w.whenAcked(10).then(() => (acked = true));
    const later = w.whenAcked(11).then(
      () => 'resolved',
      (e: Error) => e.message,
    );
    await tick();
    expect(acked).toBe(false);
    const f = w.flush();
    await ten; // journaled and synced: acknowledged before the held database write
    expect(w.stats.storedSeq).toBe(0);
    await expect(w.whenAcked(5)).resolves.toBeUndefined();
    await sink.releaseUntil(() => w.stats.storedSeq === 10, 'the write');
    await f;
    await w.stop();
    expect(await later).toMatch(/stopped/);
  });
  it('sets a damaged journal batch aside at start-up and still replays the intact batches around it', async () => {
    const journal = journalIn();
    await journal.open();
    const rows = (from: number, n: number): JournalRow[] =>
      Array.from({ length: n }, (_, i) => ({
        seq: from + i,
        benchId: 'b1',
        device: 'current',
        runId: null,
        raw: `+${from + i}`,
        value: from + i,
        unit: 'mA',
        wallMs: 1.7e12 + from + i,
        monoMs: from + i,
        sourceKind: 'port',
        sourceId: 'b1',
        clientWallMs: null,
      }));
    await journal.append(rows(1, 3));
    await journal.append(rows(4, 3));
    await journal.append(rows(7, 3));
    await journal.close();
    const buf = fs.readFileSync(journal.file);
    const second = buf.indexOf('#batch', 1);
    buf[buf.indexOf('"+4"', second) + 2] = '9'.charCodeAt(0); // one byte of batch 2 changed
    fs.writeFileSync(journal.file, buf);
    const sink = new GatedSink();
    const damaged: unknown[] = [];
    const w = new SampleWriter({ sink, journal: new SampleJournal(path.dirname(journal.file)), flushMs: 10_000, onDamaged: (d) => damaged.push(...d) });
    const started = w.start();
    await sink.releaseUntil(() => sink.stored.size === 6, 'the replay');
    expect(await started).toBe(10);
    expect([...sink.stored.keys()].sort((a, b) => a - b)).toEqual([1, 2, 3, 7, 8, 9]);
    expect(w.stats.damagedBatches).toBe(1);
    expect(damaged).toHaveLength(1);
    expect(fs.readdirSync(path.dirname(journal.file)).filter((f) => f.includes('.damaged-'))).toHaveLength(2); // the bytes and their description
    await w.stop();
  });

  it('backs off between timer-driven retries and reports how long it has been failing', async () => {
    const sink = new GatedSink();
    let wall = 1_000_000;
    const w = new SampleWriter({ sink, journal: journalIn(), flushMs: 10, maxBackoffMs: 80, wallNow: () => wall });
    await w.start();
    sink.failNext = 3;
    w.consume(entries(1, 5));
    await sink.releaseUntil(() => w.stats.failures === 1, 'the first failure');
    expect(w.stats.failingSinceMs).toBe(1_000_000);
    wall += 5000;
    // Without backoff the 10 ms timer would try about 30 times in 300 ms; doubling to 80 ms allows a handful.
    const t0 = performance.now();
    await sink.releaseUntil(() => w.stats.storedSeq === 5, 'the retries');
    expect(w.stats.failures).toBe(3);
    expect(performance.now() - t0).toBeGreaterThanOrEqual(20 + 40 - 5);
    expect(w.stats).toMatchObject({ consecutiveFailures: 0, failingSinceMs: null, lastFailure: { message: 'disk full (test)', atMs: 1_005_000 } });
    await w.stop();
  });
});
