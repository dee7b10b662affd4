/**
 * What the sample writer (sample-writer.ts) is given and reports: its sink, options and counters,
 * and how it tells a row the database refuses (set aside into the quarantine) from a failure
 * that a retry may cure.
 */
import type { DamagedBatch, JournalRow, SampleJournal } from './journal';
import { wellFormed } from './samples-csv';

/** A row set aside, with why. */
export interface QuarantineItem {
  row: JournalRow;
  reason: string;
}

/** SQLSTATE of an error or of any error it wraps (drizzle wraps the driver's), if it has one. */
function sqlState(error: unknown): string | undefined {
  for (let e = error, depth = 0; e && typeof e === 'object' && depth < 5; e = (e as { cause?: unknown }).cause, depth++) {
    const code = (e as { code?: unknown }).code;
    if (typeof code === 'string' && /^[0-9A-Z]{5}$/.test(code)) return code;
  }
  return undefined;
}

/**
 * Whether a failed write was the database refusing the rows themselves, which retrying can never
 * change: SQLSTATE class 22 (data exception: an invalid byte such as NUL, a value out of range),
 * class 23 (integrity constraint; a repeated seq, 23505, is skipped by the sink and never counts)
 * and 54000 (program limit exceeded: a value too large to store). Anything else, and an error
 * without a SQLSTATE (connection lost, worker gone, disk full: 53100), is transient. SQLSTATE
 * classes from the PostgreSQL documentation, Appendix A "PostgreSQL Error Codes"; PGlite reports
 * the same codes.
 */
export function isRowRefusal(error: unknown): boolean {
  const code = sqlState(error);
  if (!code) return false;
  return code.startsWith('22') || (code.startsWith('23') && code !== '23505') || code === '54000';
}

/** A refusal's reason as stored beside the row: its SQLSTATE and message. */
export function refusalReason(error: unknown): string {
  let e: unknown = error;
  for (let depth = 0; e && typeof e === 'object' && !(e as { code?: unknown }).code && (e as { cause?: unknown }).cause && depth < 5; depth++) e = (e as { cause?: unknown }).cause;
  const code = sqlState(error) ?? '';
  const message = e instanceof Error ? e.message : String(e);
  return `${code} ${message}`.trim().slice(0, 500);
}

/**
 * Why a row cannot be stored unaltered although the database would take it: a lone UTF-16
 * surrogate in a text is turned into U+FFFD by the UTF-8 encoding on the way in, so the stored line
 * would differ from the one received.
 */
export function unstorableReason(r: JournalRow): string | undefined {
  const texts: [string, string | null][] = [
    ['raw', r.raw],
    ['bench_id', r.benchId],
    ['device', r.device],
    ['run_id', r.runId],
    ['unit', r.unit],
    ['source_id', r.sourceId],
  ];
  for (const [name, t] of texts) if (t !== null && !wellFormed(t)) return `lone UTF-16 surrogate in ${name} (the database would store it altered)`;
  return undefined;
}

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
  /** Highest seq stored or quarantined, or 0. */
  maxSeq(): Promise<number>;
  /** Which of the seqs in [from, to] are stored or quarantined. */
  existingSeqs(from: number, to: number): Promise<Set<number>>;
  /**
   * Where rows the database refuses are set aside (idempotent per seq). Without it a refused row
   * is retried like any failure.
   */
  quarantine?: { add(items: QuarantineItem[]): Promise<void> };
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
  /** Longest wait between attempts after repeated failures, ms (the wait doubles from `flushMs`). Default 10 000. */
  maxBackoffMs?: number;
  onError?: (error: unknown) => void;
  /** Rows just set aside (the service logs them). */
  onQuarantine?: (items: QuarantineItem[]) => void;
  /** Damaged journal stretches just set aside at start-up. */
  onDamaged?: (damaged: DamagedBatch[]) => void;
  /** Wall clock (tests). */
  wallNow?: () => number;
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
  /** Rows set aside by this process (refused by the database or not storable unaltered). */
  quarantined: number;
  /** Damaged journal stretches set aside at this start. */
  damagedBatches: number;
  /** Failed attempts in a row (0 once a write succeeds). */
  consecutiveFailures: number;
  /** Wall-clock ms of the first failure of the current run of failures; null while writes succeed. */
  failingSinceMs: number | null;
  /** The last failure, however long ago. */
  lastFailure: { message: string; atMs: number } | null;
}
