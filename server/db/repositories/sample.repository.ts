import { and, asc, between, count, desc, eq, gt, isNull, sql, type SQL } from 'drizzle-orm';
import { pgliteWorkerOf, type Db } from '../client';
import type { JournalRow } from '../../bench/journal';
import { samplesCsv, wellFormed } from '../../bench/samples-csv';
import { sampleQuarantine, samples } from '../schema';
import { createSampleTrace } from './sample-trace';

export { TRACE_PAGE_ROWS, type TraceQuery } from './sample-trace';

export { samplesCsv };

export type SampleRow = typeof samples.$inferSelect;

/** A batch made ready for storing on this thread: its rows and, on PGlite, its COPY input. */
export interface PreparedSamples {
  rows: JournalRow[];
  csv?: Uint8Array<ArrayBuffer>;
}

/** Columns per row of `samples`; PostgreSQL allows at most 65 535 bind parameters per statement. */
const COLUMNS = 12;
const MAX_ROWS_PER_INSERT = Math.floor(65_535 / COLUMNS) - 1;

const COPY_SAMPLES = `COPY samples (seq, bench_id, device, run_id, raw, value, unit, wall_ms, mono_ms, source_kind, source_id, client_wall_ms) FROM '/dev/blob' WITH (FORMAT csv)`;

/** A row set aside by the sample writer, as it is listed (texts decoded back from their stored forms). */
export interface QuarantinedSample {
  seq: number;
  benchId: string;
  device: string;
  runId: string | null;
  /** The raw line exactly as received (decoded from `rawJson`). */
  raw: string;
  /** The raw line as stored: a JSON string literal, control characters and lone surrogates escaped. */
  rawJson: string;
  wallMs: number;
  reason: string;
  at: Date;
  acknowledgedAt: Date | null;
  acknowledgedBy: string | null;
}

/**
 * A text as a column can always hold it: unchanged when it is well-formed and free of control
 * characters, else its JSON string form (escapes; lossless, and the whole row is kept as JSON too).
 */
// eslint-disable-next-line no-control-regex
const storable = (t: string) => (wellFormed(t) && !/[\u0000-\u001f\u007f]/.test(t) ? t : JSON.stringify(t));

/**
 * PGlite runs no autovacuum, so nothing refreshes the planner's statistics of `samples` as it
 * grows, and a trace page planned without them sorts the whole run instead of walking the index.
 * The writer therefore runs ANALYZE itself on PostgreSQL's own autovacuum rule: when the rows
 * added since the last ANALYZE exceed 50 + 10 % of the table, looking at most once a minute
 * (autovacuum_analyze_threshold, autovacuum_analyze_scale_factor and autovacuum_naptime defaults,
 * PostgreSQL documentation, "The Autovacuum Daemon"; values from memory). State per database,
 * shared by every repository over it.
 */
const analyzeState = new WeakMap<object, { tableRows: number; since: number; running: boolean; lastMs: number }>();
const ANALYZE_THRESHOLD = 50;
const ANALYZE_SCALE = 0.1;
const ANALYZE_NAP_MS = 60_000;

export function sampleRepository(db: Db) {
  const pglite = pgliteWorkerOf(db);

  /**
   * The part of an insert done on this thread (the COPY input, on PGlite), so a writer can make it
   * for the next batch while the database stores the previous one.
   */
  function prepare(rows: JournalRow[]): PreparedSamples {
    return { rows, ...(pglite && rows.length ? { csv: new TextEncoder().encode(samplesCsv(rows)) } : {}) };
  }

  /** Stores what {@link prepare} made (its COPY input is handed to the worker, not copied). */
  async function insertPrepared(p: PreparedSamples): Promise<void> {
    const { rows } = p;
    if (!rows.length) return;
    if (pglite && p.csv) {
      const csv = p.csv;
      p.csv = undefined; // moved to the worker below; a retry prepares afresh
      try {
        await pglite.copyFrom(COPY_SAMPLES, csv);
        await analyzeIfGrown(rows.length);
        return;
      } catch (e) {
        if ((e as { code?: string }).code !== '23505') throw e; // unique_violation
      }
    }
    for (let i = 0; i < rows.length; i += MAX_ROWS_PER_INSERT) {
      await db
        .insert(samples)
        .values(rows.slice(i, i + MAX_ROWS_PER_INSERT))
        .onConflictDoNothing({ target: samples.seq });
    }
  }

  async function analyzeIfGrown(added: number): Promise<void> {
    if (!pglite) return; // a PostgreSQL server's autovacuum does this
    let st = analyzeState.get(pglite);
    if (!st) {
      const r = await pglite.query<{ n: number }>(`SELECT greatest(reltuples, 0)::float8 AS n FROM pg_class WHERE relname = 'samples'`, []);
      st = { tableRows: Number(r.rows[0]?.n ?? 0), since: 0, running: false, lastMs: -Infinity };
      analyzeState.set(pglite, st);
    }
    st.since += added;
    if (st.running || st.since <= ANALYZE_THRESHOLD + ANALYZE_SCALE * st.tableRows || performance.now() - st.lastMs < ANALYZE_NAP_MS) return;
    st.running = true;
    st.lastMs = performance.now();
    try {
      await pglite.exec('ANALYZE samples');
      st.tableRows += st.since;
      st.since = 0;
    } finally {
      st.running = false;
    }
  }


  return {
    /**
     * Stores a batch; rows already stored (same seq) are skipped. On PGlite one
     * `COPY … FROM '/dev/blob'` (in the worker); should the batch hold a stored seq (a retry after
     * a failed write, a replay), COPY refuses it whole and the batch goes in as inserts that skip
     * the stored rows. On PostgreSQL multi-row inserts, chunked under the bind-parameter limit.
     */
    insertMany: (rows: JournalRow[]): Promise<void> => insertPrepared(prepare(rows)),
    prepare,
    insertPrepared,
    /** Highest seq handed out and kept: stored or quarantined (a seq never names two samples). */
    async maxSeq(): Promise<number> {
      const [r] = await db.select({ m: sql<string | null>`max(${samples.seq})` }).from(samples);
      const [q] = await db.select({ m: sql<string | null>`max(${sampleQuarantine.seq})` }).from(sampleQuarantine);
      return Math.max(r?.m == null ? 0 : Number(r.m), q?.m == null ? 0 : Number(q.m));
    },
    /** Which seqs in [from, to] are accounted for: stored, or quarantined. */
    async existingSeqs(from: number, to: number): Promise<Set<number>> {
      const rows = await db.select({ seq: samples.seq }).from(samples).where(between(samples.seq, from, to));
      const set = new Set(rows.map((r) => Number(r.seq)));
      const q = await db.select({ seq: sampleQuarantine.seq }).from(sampleQuarantine).where(between(sampleQuarantine.seq, from, to));
      for (const r of q) set.add(Number(r.seq));
      return set;
    },
    /** Samples the writer set aside (see the sample_quarantine table). */
    quarantine: {
      /** Sets rows aside with their reasons; a seq already set aside is kept as it was. */
      async add(items: { row: JournalRow; reason: string }[]): Promise<void> {
        if (!items.length) return;
        await db
          .insert(sampleQuarantine)
          .values(
            items.map(({ row, reason }) => ({
              seq: row.seq,
              benchId: storable(row.benchId),
              device: storable(row.device),
              runId: row.runId === null ? null : storable(row.runId),
              rawJson: JSON.stringify(row.raw),
              rowJson: JSON.stringify(row),
              wallMs: Number.isFinite(row.wallMs) ? row.wallMs : 0,
              reason: storable(reason),
            })),
          )
          .onConflictDoNothing({ target: sampleQuarantine.seq });
      },
      /** The newest rows set aside, newest first. */
      async list(limit: number): Promise<QuarantinedSample[]> {
        const rows = await db.select().from(sampleQuarantine).orderBy(desc(sampleQuarantine.seq)).limit(limit);
        return rows.map((r) => {
          const row = JSON.parse(r.rowJson) as JournalRow;
          return {
            seq: Number(r.seq),
            benchId: row.benchId,
            device: row.device,
            runId: row.runId,
            raw: row.raw,
            rawJson: r.rawJson,
            wallMs: r.wallMs,
            reason: r.reason,
            at: r.at,
            acknowledgedAt: r.acknowledgedAt,
            acknowledgedBy: r.acknowledgedBy,
          };
        });
      },
      async count(): Promise<{ total: number; unacknowledged: number }> {
        const [r] = await db
          .select({ total: count(), unacknowledged: sql<number>`count(*) FILTER (WHERE ${sampleQuarantine.acknowledgedAt} IS NULL)::int` })
          .from(sampleQuarantine);
        return { total: Number(r?.total ?? 0), unacknowledged: Number(r?.unacknowledged ?? 0) };
      },
      /** Marks every row not yet reviewed as reviewed by `userId`; returns their seqs. */
      async acknowledge(userId: string): Promise<number[]> {
        const rows = await db
          .update(sampleQuarantine)
          .set({ acknowledgedAt: new Date(), acknowledgedBy: userId })
          .where(isNull(sampleQuarantine.acknowledgedAt))
          .returning({ seq: sampleQuarantine.seq });
        return rows.map((r) => Number(r.seq)).sort((a, b) => a - b);
      },
    },
    /** The run's trace as JSON pages (see {@link createSampleTrace}). */
    traceJson: createSampleTrace(db),
    /** Samples after a seq, oldest first (stream resume, durability checks). */
    async after(seq: number, limit: number, benchId?: string): Promise<SampleRow[]> {
      const where: SQL[] = [gt(samples.seq, seq)];
      if (benchId) where.push(eq(samples.benchId, benchId));
      return db
        .select()
        .from(samples)
        .where(and(...where))
        .orderBy(asc(samples.seq))
        .limit(limit);
    },
    async count(): Promise<number> {
      const [r] = await db.select({ n: sql<number>`count(*)::int` }).from(samples);
      return r?.n ?? 0;
    },
  };
}
export type SampleRepository = ReturnType<typeof sampleRepository>;
