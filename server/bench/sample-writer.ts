/**
 * Sample writer: batches raw samples from the hub and stores them, journal first (synced), then
 * the database. `ackedSeq` is the highest seq that is durably stored: after the journal sync when
 * there is a journal, else after the database write.
 *
 * The stages overlap: a batch is appended to the journal while it (or the batch before it) goes
 * into the database, at most one database write in flight. Batches are bounded (`maxBatchRows`), so a
 * backlog is written in steady pieces rather than one huge write at the end.
 *
 * A failed write is one of two kinds. The database refusing rows (a data exception such as a NUL
 * byte; {@link isRowRefusal}) never changes on retry: the refused rows are found by halving the
 * batch and set aside into the quarantine with their reason, and every other row is stored, so one
 * bad row never holds up the rows after it, the journal's truncation or a start-up replay. Any
 * other failure (connection lost, worker gone, disk full) is retried, the timer's attempts backing
 * off from `flushMs` up to `maxBackoffMs`; `stats` says since when the writer has been failing.
 */
import type { HubEntry } from './hub';
import type { DamagedBatch, JournalRow, SampleJournal } from './journal';
import { isRowRefusal, refusalReason, unstorableReason, type QuarantineItem, type PreparedBatch, type SampleSink, type SampleWriterOptions, type SampleWriterStats } from './sample-writer-types';
import { backoffDelay } from '../../shared/backoff';

export { isRowRefusal, unstorableReason, type QuarantineItem, type PreparedBatch, type SampleSink, type SampleWriterOptions, type SampleWriterStats } from './sample-writer-types';

export class SampleWriter {
  private readonly sink: SampleSink;
  private readonly journal: SampleJournal | undefined;
  private readonly flushMs: number;
  private readonly rotateBytes: number;
  private readonly batchRows: number;
  private readonly maxBatchRows: number;
  private readonly onError: (error: unknown) => void;
  private readonly onQuarantine: (items: QuarantineItem[]) => void;
  private readonly onDamaged: (damaged: DamagedBatch[]) => void;
  private readonly maxBackoffMs: number;
  private readonly wallNow: () => number;
  /** No timer-driven attempt before this (performance.now() ms): backoff after failures. */
  private retryAt = 0;
  private pending: JournalRow[] = [];
  private timer: NodeJS.Timeout | undefined;
  private flushing: Promise<void> | undefined;
  /** The database write in flight (or the last one, settled). Never rejects. */
  private dbTail: Promise<void> = Promise.resolve();
  private lastFailureMs = -Infinity;
  private stopped = false;
  /** Waiters of {@link whenAcked}, by the seq they wait for. */
  private ackWaiters: { seq: number; resolve: () => void; reject: (e: Error) => void }[] = [];
  readonly stats: SampleWriterStats = {
    ackedSeq: 0,
    storedSeq: 0,
    pending: 0,
    written: 0,
    batches: 0,
    lastBatchMs: 0,
    failures: 0,
    replayed: 0,
    quarantined: 0,
    damagedBatches: 0,
    consecutiveFailures: 0,
    failingSinceMs: null,
    lastFailure: null,
  };

  constructor(options: SampleWriterOptions) {
    this.sink = options.sink;
    this.journal = options.journal;
    this.flushMs = options.flushMs ?? 250;
    this.rotateBytes = options.rotateBytes ?? 4 * 1024 * 1024;
    this.batchRows = options.batchRows ?? 5000;
    this.maxBatchRows = Math.max(1, options.maxBatchRows ?? 20_000);
    this.onError = options.onError ?? (() => {});
    this.onQuarantine = options.onQuarantine ?? (() => {});
    this.onDamaged = options.onDamaged ?? (() => {});
    this.maxBackoffMs = options.maxBackoffMs ?? 10_000;
    this.wallNow = options.wallNow ?? Date.now;
  }

  /**
   * Start-up: replays journal rows the database lacks (a row it refuses is quarantined, never
   * blocking the start), sets damaged journal stretches aside, truncates the journal, opens it for
   * appending and returns the next free sequence number.
   */
  async start(): Promise<number> {
    let max = await this.sink.maxSeq();
    if (this.journal) {
      const { rows, damaged } = await this.journal.recover();
      this.stats.damagedBatches = damaged.length;
      if (damaged.length) this.onDamaged(damaged);
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
        if (missing.length) await this.store(missing, undefined);
        this.stats.replayed = missing.length;
        max = Math.max(max, hi);
      }
      await this.journal.truncate();
      await this.journal.open();
    }
    this.stats.ackedSeq = this.stats.storedSeq = max;
    this.timer = setInterval(() => {
      if (performance.now() >= this.retryAt) void this.flush();
    }, this.flushMs);
    this.timer.unref();
    return max + 1;
  }

  /**
   * Resolves once every sample up to `seq` is durably stored (`ackedSeq >= seq`); rejects when the
   * writer stops first. For acknowledging forwarded batches to their sender.
   */
  whenAcked(seq: number): Promise<void> {
    if (this.stats.ackedSeq >= seq) return Promise.resolve();
    if (this.stopped) return Promise.reject(new Error('the sample writer has stopped'));
    return new Promise<void>((resolve, reject) => this.ackWaiters.push({ seq, resolve, reject }));
  }

  /** Sets `ackedSeq` (never lowers it) and settles the waiters it satisfies. */
  private advanceAcked(seq: number): void {
    if (seq <= this.stats.ackedSeq) return;
    this.stats.ackedSeq = seq;
    if (!this.ackWaiters.length) return;
    const still: typeof this.ackWaiters = [];
    for (const w of this.ackWaiters) {
      if (w.seq <= seq) w.resolve();
      else still.push(w);
    }
    this.ackWaiters = still;
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
        sourceKind: e.source.kind,
        sourceId: e.source.id,
        clientWallMs: e.clientWallMs,
      });
    }
    this.stats.pending = this.pending.length;
    if (this.pending.length >= this.batchRows && !this.flushing && this.timer && performance.now() >= this.retryAt) void this.flush();
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
    const n = ++this.stats.consecutiveFailures;
    this.stats.failingSinceMs ??= this.wallNow();
    this.stats.lastFailure = { message: error instanceof Error ? error.message : String(error), atMs: this.wallNow() };
    // Timer-driven retries back off: flushMs, then doubling up to maxBackoffMs.
    this.retryAt = this.lastFailureMs + backoffDelay(n, { initialMs: this.flushMs, maxMs: this.maxBackoffMs });
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
    // A row that cannot be stored unaltered is journaled with the rest and set aside at the database stage.
    const clean = rows.some((r) => unstorableReason(r) !== undefined) ? undefined : rows;
    let prepared: PreparedBatch | undefined;
    try {
      prepared = clean && sink.prepare && sink.insertPrepared ? sink.prepare(rows) : undefined;
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
          () => this.advanceAcked(top),
          fail,
        )
      : Promise.resolve();
    const previous = this.dbTail;
    this.dbTail = previous.then(async () => {
      try {
        await this.store(rows, prepared);
      } catch (error) {
        fail(error);
        return;
      }
      this.stats.consecutiveFailures = 0;
      this.stats.failingSinceMs = null;
      this.retryAt = 0;
      this.stats.storedSeq = Math.max(this.stats.storedSeq, top);
      if (!this.journal) this.advanceAcked(this.stats.storedSeq);
      this.stats.written += rows.length;
      this.stats.batches++;
      this.stats.lastBatchMs = performance.now() - t0;
    });
    await Promise.all([journaled, previous]);
  }

  /**
   * Stores a batch in the database. Rows that cannot be stored unaltered, and rows the database
   * refuses (found by halving the refused batch until each refused row stands alone), are set aside
   * into the quarantine; every other row is stored. A transient failure throws (the caller retries
   * the whole batch; stored and quarantined seqs are skipped then).
   */
  private async store(rows: JournalRow[], prepared: PreparedBatch | undefined): Promise<void> {
    const aside: QuarantineItem[] = [];
    let ok = rows;
    if (prepared === undefined) {
      ok = [];
      for (const row of rows) {
        const reason = unstorableReason(row);
        if (reason) aside.push({ row, reason });
        else ok.push(row);
      }
    }
    try {
      if (prepared !== undefined) await this.sink.insertPrepared!(prepared);
      else if (ok.length) await this.sink.insertMany(ok);
    } catch (error) {
      if (!this.sink.quarantine || !isRowRefusal(error)) throw error;
      await this.isolate(ok, error, aside);
    }
    if (!aside.length) return;
    if (!this.sink.quarantine) throw new Error(`${aside.length} row(s) cannot be stored unaltered: ${aside[0]!.reason}`);
    await this.sink.quarantine.add(aside);
    this.stats.quarantined += aside.length;
    this.onQuarantine(aside);
  }

  /** Stores every row of a refused batch that the database takes; the refused ones go into `aside`. */
  private async isolate(rows: JournalRow[], refusal: unknown, aside: QuarantineItem[]): Promise<void> {
    if (rows.length === 1) {
      aside.push({ row: rows[0]!, reason: refusalReason(refusal) });
      return;
    }
    const mid = rows.length >>> 1;
    for (const half of [rows.slice(0, mid), rows.slice(mid)]) {
      try {
        await this.sink.insertMany(half);
      } catch (error) {
        if (!isRowRefusal(error)) throw error;
        await this.isolate(half, error, aside);
      }
    }
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
    for (const w of this.ackWaiters.splice(0)) w.reject(new Error('the sample writer stopped before the sample was stored'));
    await this.journal?.close();
  }
}
