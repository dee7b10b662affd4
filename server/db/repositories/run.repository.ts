import { and, asc, desc, eq, inArray } from 'drizzle-orm';
import { parseRunResults } from '../../../shared/schemas/runs';
import type { Db } from '../client';
import { points, runs } from '../schema';

export type RunRow = typeof runs.$inferSelect;
export type PointRow = typeof points.$inferSelect;

/** A run row with its `results` JSON parsed against the results contract (never cast). */
export function parsedRun<R extends { results: unknown }>(row: R): R & { results: ReturnType<typeof parseRunResults> } {
  return { ...row, results: parseRunResults(row.results) };
}

export function runRepository(db: Db) {
  return {
    /** Creates a run and its points (all `waiting`) in one transaction. */
    async create(values: typeof runs.$inferInsert, pointCount: number): Promise<RunRow> {
      return db.transaction(async (tx) => {
        const [row] = await tx.insert(runs).values(values).returning();
        if (pointCount > 0) {
          await tx.insert(points).values(Array.from({ length: pointCount }, (_, index) => ({ runId: row!.id, index, state: 'waiting', flags: [] })));
        }
        return row!;
      });
    },
    async get(id: string): Promise<RunRow | undefined> {
      const [row] = await db.select().from(runs).where(eq(runs.id, id)).limit(1);
      return row ? parsedRun(row) : undefined;
    },
    async forJob(jobId: string): Promise<RunRow[]> {
      return (await db.select().from(runs).where(eq(runs.jobId, jobId)).orderBy(desc(runs.startedAt))).map(parsedRun);
    },
    async active(): Promise<RunRow[]> {
      const rows = await db
        .select()
        .from(runs)
        .where(inArray(runs.status, ['running', 'paused']))
        .orderBy(asc(runs.startedAt));
      return rows.map(parsedRun);
    },
    async points(runId: string): Promise<PointRow[]> {
      return db.select().from(points).where(eq(points.runId, runId)).orderBy(asc(points.index));
    },
    /**
     * Updates one point. With `alsoIn`, the update and whatever `alsoIn` writes (the capture's audit
     * event) commit in one transaction: a capture is never stored without its audit event, nor the
     * event without the capture.
     */
    async updatePoint(
      runId: string,
      index: number,
      values: Partial<Pick<PointRow, 'state' | 'flags' | 'capture' | 'reason'>>,
      alsoIn?: (tx: Db) => Promise<unknown>,
    ): Promise<void> {
      const write = async (d: Db) => {
        await d
          .update(points)
          .set({ ...values, updatedAt: new Date() })
          .where(and(eq(points.runId, runId), eq(points.index, index)));
      };
      if (!alsoIn) return write(db);
      await db.transaction(async (tx) => {
        await write(tx);
        await alsoIn(tx);
      });
    },
    /** Updates a run; with `alsoIn` (the end's audit event), the two commit in one transaction, as in {@link updatePoint}. */
    async update(id: string, values: Partial<Pick<RunRow, 'status' | 'results' | 'endedAt'>>, alsoIn?: (tx: Db) => Promise<unknown>): Promise<void> {
      const write = async (d: Db) => {
        await d.update(runs).set(values).where(eq(runs.id, id));
      };
      if (!alsoIn) return write(db);
      await db.transaction(async (tx) => {
        await write(tx);
        await alsoIn(tx);
      });
    },
  };
}
export type RunRepository = ReturnType<typeof runRepository>;
