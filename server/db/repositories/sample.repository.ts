import { and, asc, between, eq, gt, gte, lte, sql, type SQL } from 'drizzle-orm';
import type { Db } from '../client';
import { samples } from '../schema';

export type SampleRow = typeof samples.$inferSelect;

/** Columns per row of `samples`; PostgreSQL allows at most 65 535 bind parameters per statement. */
const COLUMNS = 9;
const MAX_ROWS_PER_INSERT = Math.floor(65_535 / COLUMNS) - 1;

export function sampleRepository(db: Db) {
  return {
    /** Multi-row inserts, chunked under the bind-parameter limit; rows already stored (same seq) are skipped. */
    async insertMany(rows: SampleRow[]): Promise<void> {
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
     * Samples of a run between two wall-clock times, in time order. Read in keyset pages of
     * `pageRows` with a yield between them: an embedded PGlite runs on the event loop, and one
     * huge result would stall the live path for its whole duration.
     */
    async forRun(runId: string, q: { from?: number; to?: number; device?: string; limit: number; pageRows?: number }): Promise<SampleRow[]> {
      const page = q.pageRows ?? 2000;
      const out: SampleRow[] = [];
      let cursor: { wallMs: number; seq: number } | undefined;
      while (out.length < q.limit) {
        const where: SQL[] = [eq(samples.runId, runId)];
        if (q.from !== undefined) where.push(gte(samples.wallMs, q.from));
        if (q.to !== undefined) where.push(lte(samples.wallMs, q.to));
        if (q.device) where.push(eq(samples.device, q.device));
        if (cursor) where.push(sql`(${samples.wallMs}, ${samples.seq}) > (${cursor.wallMs}, ${cursor.seq})`);
        const rows = await db
          .select()
          .from(samples)
          .where(and(...where))
          .orderBy(asc(samples.wallMs), asc(samples.seq))
          .limit(Math.min(page, q.limit - out.length));
        out.push(...rows);
        if (rows.length < page) break;
        const last = rows[rows.length - 1]!;
        cursor = { wallMs: last.wallMs, seq: Number(last.seq) };
        await new Promise((r) => setImmediate(r));
      }
      return out;
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
