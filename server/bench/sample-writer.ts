/**
 * Sample writer: batches raw samples from the hub and stores them, journal first (synced), then
 * the database. `ackedSeq` is the highest seq that is durably stored: after the journal sync when
 * there is a journal, else after the database write.
 */
import type { HubEntry } from './hub';
import type { JournalRow, SampleJournal } from './journal';

/** Where samples end up; the service passes the sample repository. */
export interface SampleSink {
  insertMany(rows: JournalRow[]): Promise<void>;
  /** Highest seq stored, or 0. */
  maxSeq(): Promise<number>;
  /** Which of the seqs in [from, to] are stored. */
  existingSeqs(from: number, to: number): Promise<Set<number>>;
}

/** Options of {@link SampleWriter}. */
export interface SampleWriterOptions {
  sink: SampleSink;
  /** Omit to store without a journal (in-memory database in tests). */
  journal?: SampleJournal;
  /** Longest time a sample waits before its batch is written, ms. Default 250 ms. */
  flushMs?: number;
  /**
   * Pending samples that start a write at once instead of at the next tick, so a backlog keeps
   * the database busy rather than waiting out `flushMs`. Default 5 000.
   */
  batchRows?: number;
  /** Journal size that triggers a truncate once its rows are in the database, bytes. Default 4 MiB. */
  rotateBytes?: number;
  onError?: (error: unknown) => void;
}

/** Counters of the writer. */
export interface SampleWriterStats {
  ackedSeq: number;
  storedSeq: number;
  pending: number;
  written: number;
  batches: number;
  lastBatchMs: number;
  failures: number;
  replayed: number;
}

export class SampleWriter {
  private readonly sink: SampleSink;
  private readonly journal: SampleJournal | undefined;
  private readonly flushMs: number;
  private readonly rotateBytes: number;
  private readonly batchRows: number;
  private readonly onError: (error: unknown) => void;
  private pending: JournalRow[] = [];
  private timer: NodeJS.Timeout | undefined;
  private flushing: Promise<void> | undefined;
  private stopped = false;
  readonly stats: SampleWriterStats = { ackedSeq: 0, storedSeq: 0, pending: 0, written: 0, batches: 0, lastBatchMs: 0, failures: 0, replayed: 0 };

  constructor(options: SampleWriterOptions) {
    this.sink = options.sink;
    this.journal = options.journal;
    this.flushMs = options.flushMs ?? 250;
    this.rotateBytes = options.rotateBytes ?? 4 * 1024 * 1024;
    this.batchRows = options.batchRows ?? 5000;
    this.onError = options.onError ?? (() => {});
  }

  /**
   * Start-up: replays journal rows the database lacks, truncates the journal, opens it for
   * appending and returns the next free sequence number.
   */
  async start(): Promise<number> {
    let max = await this.sink.maxSeq();
    if (this.journal) {
      const rows = await this.journal.read();
      if (rows.length) {
        let lo = Infinity;
        let hi = -Infinity;
        for (const r of rows) {
          if (r.seq < lo) lo = r.seq;
          if (r.seq > hi) hi = r.seq;
        }
        const have = await this.sink.existingSeqs(lo, hi);
        const seen = new Set<number>();
        const missing = rows.filter((r) => !have.has(r.seq) && !seen.has(r.seq) && seen.add(r.seq));
        if (missing.length) await this.sink.insertMany(missing);
        this.stats.replayed = missing.length;
        max = Math.max(max, hi);
      }
      await this.journal.truncate();
      await this.journal.open();
    }
    this.stats.ackedSeq = this.stats.storedSeq = max;
    this.timer = setInterval(() => void this.flush(), this.flushMs);
    this.timer.unref();
    return max + 1;
  }

  /** Hub consumer: keeps the samples of a batch for the next write. Never awaits. */
  readonly consume = (batch: HubEntry[]): void => {
    if (this.stopped) return;
    for (const e of batch) {
      if (e.kind !== 'sample') continue;
      this.pending.push({
        seq: e.seq,
        benchId: e.benchId,
        device: e.device,
        runId: e.runId,
        raw: e.raw,
        value: e.value,
        unit: e.unit,
        wallMs: e.wallMs,
        monoMs: e.monoMs,
      });
    }
    this.stats.pending = this.pending.length;
    if (this.pending.length >= this.batchRows && !this.flushing && this.timer) void this.flush();
  };

  /** Writes what is pending; concurrent calls share one write at a time. */
  flush(): Promise<void> {
    if (this.flushing) return this.flushing;
    if (!this.pending.length) return Promise.resolve();
    const failuresBefore = this.stats.failures;
    this.flushing = this.writeBatch().finally(() => {
      this.flushing = undefined;
      // A backlog built up during the write: write it now (not after a failure: that waits for the tick).
      if (this.pending.length >= this.batchRows && this.timer && !this.stopped && this.stats.failures === failuresBefore) void this.flush();
    });
    return this.flushing;
  }

  private async writeBatch(): Promise<void> {
    const rows = this.pending;
    this.pending = [];
    this.stats.pending = 0;
    const t0 = performance.now();
    const top = rows[rows.length - 1]!.seq;
    try {
      if (this.journal) {
        await this.journal.append(rows);
        this.stats.ackedSeq = Math.max(this.stats.ackedSeq, top);
      }
      await this.sink.insertMany(rows);
      this.stats.storedSeq = Math.max(this.stats.storedSeq, top);
      if (!this.journal) this.stats.ackedSeq = this.stats.storedSeq;
      this.stats.written += rows.length;
      this.stats.batches++;
      this.stats.lastBatchMs = performance.now() - t0;
      if (this.journal && this.journal.size > this.rotateBytes) await this.journal.truncate();
    } catch (error) {
      this.stats.failures++;
      // Keep the rows for the next attempt (a journaled row may be written twice; replay skips stored seqs).
      this.pending = rows.concat(this.pending);
      this.onError(error);
    }
  }

  /** Flushes everything pending and closes the journal. */
  async stop(): Promise<void> {
    clearInterval(this.timer);
    for (let i = 0; i < 5 && (this.pending.length || this.flushing); i++) {
      await this.flushing;
      await this.flush();
    }
    this.stopped = true;
    await this.journal?.close();
  }
}
