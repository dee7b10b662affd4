import { and, asc, eq, sql } from 'drizzle-orm';
import type { Db } from '../client';
import { runs, samples } from '../schema';

/** The raw trace of a run for review: its span, counts, raw rows and a min/mean/max decimation in the database. */
export function traceRepository(db: Db) {
  return {
  /** Status and end of a run (to tell whether its samples can still change). */
  async runState(runId: string): Promise<{ status: string; endedAt: Date | null } | undefined> {
    const [row] = await db.select({ status: runs.status, endedAt: runs.endedAt }).from(runs).where(eq(runs.id, runId)).limit(1);
    return row;
  },

  async traceSpan(runId: string): Promise<{ n: number; from: number | null; to: number | null }> {
    const [row] = await db
      .select({ n: sql<number>`count(*)::int`, from: sql<number | null>`min(${samples.wallMs})`, to: sql<number | null>`max(${samples.wallMs})` })
      .from(samples)
      .where(eq(samples.runId, runId));
    return { n: row?.n ?? 0, from: row?.from ?? null, to: row?.to ?? null };
  },
  async traceCount(runId: string, from: number, to: number): Promise<number> {
    const [row] = await db
      .select({ n: sql<number>`count(*)::int` })
      .from(samples)
      .where(and(eq(samples.runId, runId), sql`${samples.wallMs} between ${from} and ${to}`));
    return row?.n ?? 0;
  },
  async traceRaw(runId: string, from: number, to: number, limit: number) {
    return db
      .select({ device: samples.device, wallMs: samples.wallMs, value: samples.value, raw: samples.raw })
      .from(samples)
      .where(and(eq(samples.runId, runId), sql`${samples.wallMs} between ${from} and ${to}`))
      .orderBy(asc(samples.wallMs))
      .limit(limit);
  },
  /** Per device and time bucket: min, mean and max of the value and the number of samples. */
  async traceBuckets(runId: string, from: number, to: number, bucketMs: number) {
    const b = sql<number>`floor((${samples.wallMs} - ${from}) / ${bucketMs})::int`;
    return db
      .select({ device: samples.device, b, lo: sql<number | null>`min(${samples.value})`, hi: sql<number | null>`max(${samples.value})`, mean: sql<number | null>`avg(${samples.value})`, n: sql<number>`count(*)::int` })
      .from(samples)
      .where(and(eq(samples.runId, runId), sql`${samples.wallMs} between ${from} and ${to}`))
      // By position: the bucket expression carries bind parameters, so it cannot be repeated.
      .groupBy(sql`1`, sql`2`)
      .orderBy(sql`2`);
  },
  };
}
