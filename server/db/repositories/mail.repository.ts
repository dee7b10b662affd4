import { desc, eq, sql } from 'drizzle-orm';
import type { Db } from '../client';
import { mailSchedules, outboxMessages } from '../schema';

export type OutboxRow = typeof outboxMessages.$inferSelect;
export type OutboxInsert = typeof outboxMessages.$inferInsert;

/** The Outbox: messages the local fake SMTP server received. */
export function mailRepository(db: Db) {
  return {
    async insert(values: OutboxInsert): Promise<void> {
      await db.insert(outboxMessages).values(values).onConflictDoNothing();
    },
    async list(limit: number): Promise<OutboxRow[]> {
      return db.select().from(outboxMessages).orderBy(desc(outboxMessages.receivedAt)).limit(limit);
    },
    async get(id: string): Promise<OutboxRow | undefined> {
      const [row] = await db.select().from(outboxMessages).where(eq(outboxMessages.id, id)).limit(1);
      return row;
    },
    /**
     * Claims `slot` for schedule `name`: true when this call moved the schedule's last slot forward
     * to it (insert or update in one statement), false when that slot (or a later one) already ran.
     */
    async claimSlot(name: string, slot: Date, at: Date): Promise<boolean> {
      const rows = await db
        .insert(mailSchedules)
        .values({ name, lastSlot: slot, lastRunAt: at })
        .onConflictDoUpdate({ target: mailSchedules.name, set: { lastSlot: slot, lastRunAt: at }, setWhere: sql`${mailSchedules.lastSlot} < ${slot}` })
        .returning({ name: mailSchedules.name });
      return rows.length > 0;
    },
    async schedules(): Promise<(typeof mailSchedules.$inferSelect)[]> {
      return db.select().from(mailSchedules);
    },
  };
}
