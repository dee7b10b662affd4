import { asc, desc, eq, and, sql, type SQL } from 'drizzle-orm';
import type { Db } from '../client';
import { auditEvents } from '../schema';

export type AuditRow = typeof auditEvents.$inferSelect;

export interface AuditAppend {
  at: Date;
  actorId: string | null;
  actorEmail: string | null;
  action: string;
  entity: string;
  entityId: string | null;
  before: unknown;
  after: unknown;
}

/**
 * Append-only audit rows. The chain (prevHash → hash) is computed by the caller's hash
 * function over the canonical row; appends are serialised with a transaction-scoped
 * advisory lock so two writers cannot fork the chain on a PostgreSQL server.
 */
export function auditRepository(db: Db) {
  return {
    async append(entry: AuditAppend, hash: (prevHash: string, id: number, entry: AuditAppend) => string): Promise<AuditRow> {
      return db.transaction(async (tx) => {
        await tx.execute(sql`select pg_advisory_xact_lock(727001)`);
        const [last] = await tx.select({ id: auditEvents.id, hash: auditEvents.hash }).from(auditEvents).orderBy(desc(auditEvents.id)).limit(1);
        const id = (last?.id ?? 0) + 1;
        const prevHash = last?.hash ?? 'genesis';
        const [row] = await tx
          .insert(auditEvents)
          .values({ id, prevHash, hash: hash(prevHash, id, entry), ...entry, before: entry.before ?? null, after: entry.after ?? null })
          .returning();
        return row!;
      });
    },
    async list(opts: { entity?: string; entityId?: string; limit: number; afterId?: number }): Promise<AuditRow[]> {
      const where: SQL[] = [];
      if (opts.entity) where.push(eq(auditEvents.entity, opts.entity));
      if (opts.entityId) where.push(eq(auditEvents.entityId, opts.entityId));
      if (opts.afterId !== undefined) where.push(sql`${auditEvents.id} > ${opts.afterId}`);
      return db
        .select()
        .from(auditEvents)
        .where(where.length ? and(...where) : undefined)
        .orderBy(asc(auditEvents.id))
        .limit(opts.limit);
    },
  };
}
