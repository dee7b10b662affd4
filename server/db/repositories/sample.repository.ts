import { and, asc, between, eq, gt, gte, lte, sql, type SQL } from 'drizzle-orm';
import { pgliteWorkerOf, type Db } from '../client';
import { samples } from '../schema';

export type SampleRow = typeof samples.$inferSelect;

/** Columns per row of `samples`; PostgreSQL allows at most 65 535 bind parameters per statement. */
const COLUMNS = 9;
const MAX_ROWS_PER_INSERT = Math.floor(65_535 / COLUMNS) - 1;

const COPY_SAMPLES = `COPY samples (seq, bench_id, device, run_id, raw, value, unit, wall_ms, mono_ms) FROM '/dev/blob' WITH (FORMAT csv)`;

/** A CSV field: text always quoted (so '' is an empty string), null as an unquoted empty field. */
const csvText = (v: string | null) => (v === null ? '' : `"${v.includes('"') ? v.replaceAll('"', '""') : v}"`);
const csvNum = (v: number | null) => (v === null ? '' : String(v));

/** Rows as CSV for `COPY samples (…) FROM … WITH (FORMAT csv)`, in COPY_SAMPLES' column order. */
export function samplesCsv(rows: readonly SampleRow[]): string {
  let out = '';
  for (const r of rows) {
    out += `${r.seq},${csvText(r.benchId)},${csvText(r.device)},${csvText(r.runId)},${csvText(r.raw)},${csvNum(r.value)},${csvText(r.unit)},${r.wallMs},${r.monoMs}\n`;
  }
  return out;
}

/** A string literal for SQL that cannot take bind parameters (COPY); standard_conforming_strings is on. */
const literal = (s: string) => `'${s.replaceAll("'", "''")}'`;
function finite(n: number): string {
  if (!Number.isFinite(n)) throw new Error(`not a finite number: ${n}`);
  return String(n);
}

/** Trace query of {@link SampleRepository.traceJson}. */
export interface TraceQuery {
  /** Wall-clock ms since epoch, inclusive. */
  from?: number;
  to?: number;
  device?: string;
  /** Most samples returned. */
  limit: number;
}

export function sampleRepository(db: Db) {
  const pglite = pgliteWorkerOf(db);
  return {
    /**
     * Stores a batch; rows already stored (same seq) are skipped. On PGlite one
     * `COPY … FROM '/dev/blob'` (in the worker); should the batch hold a stored seq (a retry after
     * a failed write, a replay), COPY refuses it whole and the batch goes in as inserts that skip
     * the stored rows. On PostgreSQL multi-row inserts, chunked under the bind-parameter limit.
     */
    async insertMany(rows: SampleRow[]): Promise<void> {
      if (!rows.length) return;
      if (pglite) {
        try {
          await pglite.copyFrom(COPY_SAMPLES, new TextEncoder().encode(samplesCsv(rows)));
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
    },
    async maxSeq(): Promise<number> {
      const [r] = await db.select({ m: sql<string | null>`max(${samples.seq})` }).from(samples);
      return r?.m == null ? 0 : Number(r.m);
    },
    async existingSeqs(from: number, to: number): Promise<Set<number>> {
      const rows = await db.select({ seq: samples.seq }).from(samples).where(between(samples.seq, from, to));
      return new Set(rows.map((r) => Number(r.seq)));
    },
    /**
     * Samples of a run between two wall-clock times, in time order, as the UTF-8 JSON
     * `{ "items": TraceSample[], "truncated": boolean }` (at most `limit` items; `truncated` when
     * there are more). On PGlite the rows are turned into JSON by PostgreSQL under COPY in the
     * worker, so a long run's trace costs this thread neither parsing nor serialising.
     */
    async traceJson(runId: string, q: TraceQuery): Promise<Buffer> {
      if (pglite) {
        const where = [`run_id = ${literal(runId)}`];
        if (q.from !== undefined) where.push(`wall_ms >= ${finite(q.from)}`);
        if (q.to !== undefined) where.push(`wall_ms <= ${finite(q.to)}`);
        if (q.device) where.push(`device = ${literal(q.device)}`);
        const limit = Math.max(0, Math.floor(q.limit));
        // Hand-built JSON (float8 text is JSON's number syntax; a non-finite value becomes null, as in JSON.stringify).
        const select =
          `SELECT '{"seq":' || seq || ',"device":' || to_json(device) || ',"wallMs":' || wall_ms ` +
          `|| ',"value":' || CASE WHEN value IS NULL OR value IN ('NaN', 'Infinity', '-Infinity') THEN 'null' ELSE value::text END ` +
          `|| ',"unit":' || coalesce(to_json(unit)::text, 'null') || ',"raw":' || to_json(raw) || '}' ` +
          `FROM samples WHERE ${where.join(' AND ')} ORDER BY wall_ms, seq LIMIT ${limit + 1}`;
        const r = await pglite.copyJsonArray(select, limit, { prefix: '{"items":', suffix: [',"truncated":false}', ',"truncated":true}'] });
        return r.bytes;
      }
      const where: SQL[] = [eq(samples.runId, runId)];
      if (q.from !== undefined) where.push(gte(samples.wallMs, q.from));
      if (q.to !== undefined) where.push(lte(samples.wallMs, q.to));
      if (q.device) where.push(eq(samples.device, q.device));
      const rows = await db
        .select({ seq: samples.seq, device: samples.device, wallMs: samples.wallMs, value: samples.value, unit: samples.unit, raw: samples.raw })
        .from(samples)
        .where(and(...where))
        .orderBy(asc(samples.wallMs), asc(samples.seq))
        .limit(q.limit + 1);
      const truncated = rows.length > q.limit;
      if (truncated) rows.length = q.limit;
      return Buffer.from(JSON.stringify({ items: rows.map((r) => ({ ...r, seq: Number(r.seq) })), truncated }));
    },
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
