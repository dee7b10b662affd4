import { desc, eq } from 'drizzle-orm';
import type { Db } from '../client';
import { outboxMessages } from '../schema';

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
  };
}
