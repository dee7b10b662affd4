import { and, asc, count, eq, gt, inArray, lt, sql } from 'drizzle-orm';
import type { Db } from '../client';
import { benches, forwardSenders, runs, samples } from '../schema';

export type BenchRow = typeof benches.$inferSelect;
export type ForwardSenderRow = typeof forwardSenders.$inferSelect;

/** Registered benches and the forwarding senders' last accepted batches. */
export function benchRegistryRepository(db: Db) {
  return {
    async list(): Promise<BenchRow[]> {
      return db.select().from(benches).orderBy(asc(benches.id));
    },
    async get(id: string): Promise<BenchRow | undefined> {
      const [row] = await db.select().from(benches).where(eq(benches.id, id)).limit(1);
      return row;
    },
    async count(): Promise<number> {
      const [r] = await db.select({ n: count() }).from(benches);
      return Number(r?.n ?? 0);
    },
    async create(values: typeof benches.$inferInsert): Promise<BenchRow> {
      const [row] = await db.insert(benches).values(values).returning();
      return row!;
    },
    async revoke(id: string, by: string): Promise<BenchRow | undefined> {
      const [row] = await db.update(benches).set({ revokedAt: new Date(), revokedBy: by }).where(eq(benches.id, id)).returning();
      return row;
    },

    async sender(key: string): Promise<ForwardSenderRow | undefined> {
      const [row] = await db.select().from(forwardSenders).where(eq(forwardSenders.key, key)).limit(1);
      return row;
    },
    /** Records a sender's last accepted batch (only ever forwards). */
    async markSender(key: string, benchId: string, batchSeq: number, lastSeq: number): Promise<void> {
      await db
        .insert(forwardSenders)
        .values({ key, benchId, batchSeq, lastSeq })
        .onConflictDoUpdate({
          target: forwardSenders.key,
          set: { batchSeq: sql`greatest(${forwardSenders.batchSeq}, excluded.batch_seq)`, lastSeq: sql`greatest(${forwardSenders.lastSeq}, excluded.last_seq)`, updatedAt: new Date() },
        });
    },
    /** Forgets senders not heard from since `before`. */
    async pruneSenders(before: Date): Promise<void> {
      await db.delete(forwardSenders).where(lt(forwardSenders.updatedAt, before));
    },
    /** Stored samples of a bench after a seq, oldest first: device and raw line (duplicate checks after a restart). */
    async samplesAfter(benchId: string, afterSeq: number, limit: number): Promise<{ seq: number; device: string; raw: string }[]> {
      const rows = await db
        .select({ seq: samples.seq, device: samples.device, raw: samples.raw })
        .from(samples)
        .where(and(eq(samples.benchId, benchId), gt(samples.seq, afterSeq)))
        .orderBy(asc(samples.seq))
        .limit(limit);
      return rows.map((r) => ({ ...r, seq: Number(r.seq) }));
    },
    /** Runs' performers (who started them). */
    async performers(runIds: string[]): Promise<Map<string, string | null>> {
      if (!runIds.length) return new Map();
      const rows = await db.select({ id: runs.id, startedBy: runs.startedBy }).from(runs).where(inArray(runs.id, runIds));
      return new Map(rows.map((r) => [r.id, r.startedBy]));
    },
  };
}
export type BenchRegistryRepository = ReturnType<typeof benchRegistryRepository>;
