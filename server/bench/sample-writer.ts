/**
 * Sample writer: batches raw samples from the hub and stores them, journal first (synced), then
 * the database. `ackedSeq` is the highest seq that is durably stored: after the journal sync when
 * there is a journal, else after the database write.
 *
 * The stages overlap: a batch is appended to the journal while it (or the batch before it) goes
 * into the database, at most one database write in flight. Batches are bounded (`maxBatchRows`), so a
 * backlog is written in steady pieces rather than one huge write at the end.
 */
import type { HubEntry } from './hub';
import type { JournalRow, SampleJournal } from './journal';

/** A batch made ready on this thread; `csv`, when there, is the journal's and COPY's form of it. */
export interface PreparedBatch {
  rows: JournalRow[];
  csv?: Uint8Array<ArrayBuffer>;
}

/** Where samples end up; the service passes the sample repository. */
export interface SampleSink {
  insertMany(rows: JournalRow[]): Promise<void>;
  /**
   * Optional split of insertMany: `prepare` does this thread's share (building the COPY input) and
   * runs in the journal stage, overlapping the previous batch's database write; `insertPrepared`
   * stores the result.
   */
  prepare?(rows: JournalRow[]): PreparedBatch;
  insertPrepared?(prepared: PreparedBatch): Promise<void>;
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
  /** Most rows in one write. Default 20 000. */
  maxBatchRows?: number;
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
  private readonly maxBatchRows: number;
  private readonly onError: (error: unknown) => void;
  private pending: JournalRow[] = [];
  private timer: NodeJS.Timeout | undefined;
  private flushing: Promise<void> | undefined;
  /** The database write in flight (or the last one, settled). Never rejects. */
  private dbTail: Promise<void> = Promise.resolve();
  private lastFailureMs = -Infinity;
  private stopped = false;
  private ackWaiters: { seq: number; resolve: () => void }[] = [];
  readonly stats: SampleWriterStats = { ackedSeq: 0, storedSeq: 0, pending: 0, written: 0, batches: 0, lastBatchMs: 0, failures: 0, replayed: 0 };

  constructor(options: SampleWriterOptions) {
    this.sink = options.sink;
    this.journal = options.journal;
    this.flushMs = options.flushMs ?? 250;
    this.rotateBytes = options.rotateBytes ?? 4 * 1024 * 1024;
    this.batchRows = options.batchRows ?? 5000;
    this.maxBatchRows = Math.max(1, options.maxBatchRows ?? 20_000);
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

  /**
   * Writes a batch of what is pending (journal, then database); concurrent calls share one batch at
   * a time. Resolves once that batch and every earlier one is in the database (or has failed).
   */
  flush(): Promise<void> {
    if (this.flushing) return this.flushing.then(() => this.dbTail);
    if (!this.pending.length) return this.dbTail;
    const failuresBefore = this.stats.failures;
    this.flushing = this.writeBatch().finally(() => {
      this.flushing = undefined;
      // A backlog built up during the write: write it now (not after a failure: that waits for the tick).
      const failedLately = this.stats.failures !== failuresBefore || performance.now() - this.lastFailureMs < this.flushMs;
      if (this.pending.length >= this.batchRows && this.timer && !this.stopped && !failedLately) void this.flush();
    });
    return this.flushing.then(() => this.dbTail);
  }

  /** Puts rows that failed to store back in front of what is pending, for the next attempt. */
  private requeue(rows: JournalRow[], error: unknown): void {
    this.stats.failures++;
    this.lastFailureMs = performance.now();
    // A journaled row may be written twice; the sink and the replay skip stored seqs.
    this.pending = rows.concat(this.pending);
    this.stats.pending = this.pending.length;
    this.onError(error);
  }

  /**
   * Journal stage of one batch; starts its database stage behind the previous one and returns when
   * that previous one is done, so at most one database write is in flight while the next batch
   * goes to the journal.
   */
  private async writeBatch(): Promise<void> {
    if (this.journal && this.journal.size > this.rotateBytes) {
      // Truncate only when everything journaled is in the database (no append runs meanwhile: this is the journal stage).
      await this.dbTail;
      if (this.stats.storedSeq >= this.stats.ackedSeq && !this.pending.some((r) => r.seq <= this.stats.ackedSeq)) await this.journal.truncate();
    }
    const rows = this.pending.length <= this.maxBatchRows ? this.pending : this.pending.slice(0, this.maxBatchRows);
    this.pending = rows === this.pending ? [] : this.pending.slice(rows.length);
    this.stats.pending = this.pending.length;
    if (!rows.length) return;
    const t0 = performance.now();
    let top = 0;
    for (const r of rows) if (r.seq > top) top = r.seq;
    const sink = this.sink;
    let prepared: PreparedBatch | undefined;
    try {
      prepared = sink.prepare && sink.insertPrepared ? sink.prepare(rows) : undefined;
    } catch (error) {
      this.requeue(rows, error);
      return;
    }
    // The journal write and the database write of a batch run side by side: a sample counts as
    // stored (acknowledged) once the journal is synced, whatever the database is doing. Serialised
    // once: the CSV made for the database's COPY is also what the journal stores (a copy of it,
    // since COPY's input is moved to the database thread).
    let failed = false;
    const fail = (error: unknown) => {
      if (failed) return; // one requeue per batch, however many stages failed
      failed = true;
      this.requeue(rows, error);
    };
    const journaled = this.journal
      ? (prepared?.csv ? this.journal.appendCsv(prepared.csv.slice(), rows.length) : this.journal.append(rows)).then(
          () => {
            this.stats.ackedSeq = Math.max(this.stats.ackedSeq, top);
            this.wakeAckWaiters();
          },
          fail,
        )
      : Promise.resolve();
    const previous = this.dbTail;
    this.dbTail = previous.then(async () => {
      try {
        if (prepared !== undefined) await sink.insertPrepared!(prepared);
        else await sink.insertMany(rows);
      } catch (error) {
        fail(error);
        return;
      }
      this.stats.storedSeq = Math.max(this.stats.storedSeq, top);
      if (!this.journal) {
        this.stats.ackedSeq = this.stats.storedSeq;
        this.wakeAckWaiters();
      }
      this.stats.written += rows.length;
      this.stats.batches++;
      this.stats.lastBatchMs = performance.now() - t0;
    });
    await Promise.all([journaled, previous]);
  }

  /** Resolves once every sample up to `seq` is durably stored (`stats.ackedSeq >= seq`). */
  whenAcked(seq: number): Promise<void> {
    if (this.stats.ackedSeq >= seq) return Promise.resolve();
    return new Promise((resolve) => this.ackWaiters.push({ seq, resolve }));
  }

  private wakeAckWaiters(): void {
    if (!this.ackWaiters.length) return;
    const acked = this.stats.ackedSeq;
    const still: { seq: number; resolve: () => void }[] = [];
    for (const w of this.ackWaiters) {
      if (w.seq <= acked) w.resolve();
      else still.push(w);
    }
    this.ackWaiters = still;
  }

  /** Flushes everything pending and closes the journal. */
  async stop(): Promise<void> {
    clearInterval(this.timer);
    const rounds = 5 + Math.ceil(this.pending.length / this.maxBatchRows);
    for (let i = 0; i < rounds && (this.pending.length || this.flushing); i++) {
      await this.flushing;
      await this.flush();
    }
    await this.dbTail;
    this.stopped = true;
    await this.journal?.close();
  }
}
