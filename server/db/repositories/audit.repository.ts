import { asc, desc, eq, and, inArray, sql, type SQL } from 'drizzle-orm';
import type { Db } from '../client';
import { attachments, auditEvents, benches, instruments, jobs, runs, standards, users } from '../schema';

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
    /**
     * Names for the ids an audit page mentions: users (by id and by email), and the record each
     * entity id stands for (a job's or run's instrument tag, an instrument's tag, a standard's
     * description and serial, a user's name, a bench's label).
     */
    async labels(q: { userIds: string[]; emails: string[]; entityIds: string[] }): Promise<{ users: Map<string, string>; byEmail: Map<string, string>; entities: Map<string, string> }> {
      const uuid = (xs: string[]) => [...new Set(xs.filter((x) => /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i.test(x)))];
      const ids = uuid(q.entityIds);
      const uids = uuid([...q.userIds, ...ids]);
      const emails = [...new Set(q.emails)];
      const [us, es, js, rs, is, ss, bs, as] = await Promise.all([
        uids.length ? db.select({ id: users.id, name: users.name }).from(users).where(inArray(users.id, uids)) : [],
        emails.length ? db.select({ email: users.email, name: users.name }).from(users).where(inArray(users.email, emails)) : [],
        ids.length ? db.select({ id: jobs.id, tag: instruments.tag }).from(jobs).innerJoin(instruments, eq(instruments.id, jobs.instrumentId)).where(inArray(jobs.id, ids)) : [],
        ids.length
          ? db
              .select({ id: runs.id, kind: runs.kind, tag: instruments.tag })
              .from(runs)
              .innerJoin(jobs, eq(jobs.id, runs.jobId))
              .innerJoin(instruments, eq(instruments.id, jobs.instrumentId))
              .where(inArray(runs.id, ids))
          : [],
        ids.length ? db.select({ id: instruments.id, tag: instruments.tag }).from(instruments).where(inArray(instruments.id, ids)) : [],
        ids.length ? db.select({ id: standards.id, description: standards.description, serial: standards.serial }).from(standards).where(inArray(standards.id, ids)) : [],
        ids.length ? db.select({ id: benches.id, label: benches.label }).from(benches).where(inArray(benches.id, ids)) : [],
        ids.length ? db.select({ id: attachments.id, name: attachments.originalName }).from(attachments).where(inArray(attachments.id, ids)) : [],
      ]);
      const entities = new Map<string, string>();
      for (const r of us) entities.set(r.id, r.name);
      for (const r of is) entities.set(r.id, r.tag);
      for (const r of ss) entities.set(r.id, `${r.description} (${r.serial})`);
      for (const r of bs) entities.set(r.id, r.label);
      for (const r of as) entities.set(r.id, r.name);
      for (const r of js) entities.set(r.id, r.tag);
      for (const r of rs) entities.set(r.id, `${r.tag} ${r.kind} run`);
      return { users: new Map(us.map((r) => [r.id, r.name])), byEmail: new Map(es.map((r) => [r.email, r.name])), entities };
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
