import { createHash } from 'node:crypto';
import { auditRepository, type AuditAppend, type AuditRow } from '../db/repositories/audit.repository';
import type { Db } from '../db/client';
import type { AuditEntry } from '../../shared/schemas/records';
import { summaryOf } from './audit-words';

/** Who did something; null for the system (seed, scheduled mail). */
export interface Actor {
  id: string;
  email: string;
}

/** Something other than a user acting on its own, named in the trail (a bench capturing hands-free); no user id. */
export interface NonUserActor {
  nonUser: string;
}

/** Canonical JSON (sorted keys) so a hash does not depend on key order. */
export function canonical(value: unknown): string {
  if (value === null || typeof value !== 'object') return JSON.stringify(value ?? null);
  if (value instanceof Date) return JSON.stringify(value.toISOString());
  if (Array.isArray(value)) return `[${value.map(canonical).join(',')}]`;
  const obj = value as Record<string, unknown>;
  return `{${Object.keys(obj)
    .filter((k) => obj[k] !== undefined)
    .sort()
    .map((k) => `${JSON.stringify(k)}:${canonical(obj[k])}`)
    .join(',')}}`;
}

/** sha256 over the previous hash and the row's canonical content: the chain link. */
export function chainHash(prevHash: string, id: number, e: AuditAppend): string {
  const body = canonical({
    id,
    at: e.at.toISOString(),
    actorId: e.actorId,
    actorEmail: e.actorEmail,
    action: e.action,
    entity: e.entity,
    entityId: e.entityId,
    before: e.before ?? null,
    after: e.after ?? null,
  });
  return createHash('sha256').update(prevHash).update('\n').update(body).digest('hex');
}

export interface VerifyResult {
  ok: boolean;
  checked: number;
  /** First row whose content or link does not match, if any. */
  brokenAt?: { id: number; reason: string };
}

export function createAuditService(db: Db) {
  const repo = auditRepository(db);
  return {
    /**
     * Appends one event; the row is hash-linked to the one before it. With `tx`, the row is written
     * in that transaction (it commits or rolls back with what it records).
     */
    async record(actor: Actor | NonUserActor | null, action: string, entity: string, entityId: string | null, before?: unknown, after?: unknown, tx?: Db): Promise<AuditRow> {
      const user = actor && 'id' in actor ? actor : null;
      // JSON round-trip so what is hashed is exactly what jsonb stores back.
      const norm = (v: unknown) => (v === undefined ? null : JSON.parse(JSON.stringify(v)));
      return (tx ? auditRepository(tx) : repo).append(
        {
          at: new Date(Math.floor(Date.now())),
          actorId: user?.id ?? null,
          // The actor column names a user by email, or a non-user actor by its description.
          actorEmail: user ? user.email : actor && 'nonUser' in actor ? actor.nonUser : null,
          action,
          entity,
          entityId,
          before: norm(before),
          after: norm(after),
        },
        chainHash,
      );
    },
    async list(opts: { entity?: string; entityId?: string; limit?: number; afterId?: number }): Promise<AuditRow[]> {
      return repo.list({ ...opts, limit: Math.min(opts.limit ?? 200, 1000) });
    },
    /**
     * Rows as the API returns them, in words: the actor's name (for a hands-free capture, the
     * bench and the run's performer), the record's tag or name, and what happened.
     */
    async inWords(rows: AuditRow[]): Promise<AuditEntry[]> {
      const performerOf = (r: AuditRow) => {
        const by = (r.after as { by?: { kind?: string; benchId?: string; performer?: { id?: string; email?: string } | null } } | null)?.by;
        return by?.kind === 'bench' ? by : undefined;
      };
      const names = await repo.labels({
        userIds: rows.flatMap((r) => [r.actorId ?? '', performerOf(r)?.performer?.id ?? '']).filter(Boolean),
        emails: rows.flatMap((r) => [r.actorEmail ?? '', performerOf(r)?.performer?.email ?? '']).filter((e) => e.includes('@') && !e.includes(' ')),
        entityIds: rows.map((r) => r.entityId ?? '').filter(Boolean),
      });
      const person = (id?: string | null, email?: string | null) => (id && names.users.get(id)) || (email && names.byEmail.get(email)) || email || null;
      return rows.map((r) => {
        const bench = performerOf(r);
        let actorName: string | null;
        if (bench) {
          const who = person(bench.performer?.id, bench.performer?.email);
          actorName = `Bench ${bench.benchId ?? '?'} (hands-free${who ? `, run performed by ${who}` : ''})`;
        } else if (r.actorId || r.actorEmail) actorName = person(r.actorId, r.actorEmail) ?? r.actorEmail;
        else actorName = 'Stillpoint (automatic)';
        return {
          ...r,
          at: r.at.toISOString(),
          actorName,
          subject: (r.entityId && names.entities.get(r.entityId)) ?? null,
          summary: summaryOf(r.action, r.after),
        };
      });
    },
    /** Recomputes the chain from the first row; reports the first row that was altered or unlinked. */
    async verify(): Promise<VerifyResult> {
      let prev = 'genesis';
      let checked = 0;
      let afterId: number | undefined;
      for (;;) {
        const rows = await repo.list({ limit: 1000, afterId });
        if (!rows.length) break;
        for (const r of rows) {
          if (r.prevHash !== prev) return { ok: false, checked, brokenAt: { id: r.id, reason: 'link to the previous row does not match' } };
          const expect = chainHash(prev, r.id, {
            at: r.at,
            actorId: r.actorId,
            actorEmail: r.actorEmail,
            action: r.action,
            entity: r.entity,
            entityId: r.entityId,
            before: r.before,
            after: r.after,
          });
          if (expect !== r.hash) return { ok: false, checked, brokenAt: { id: r.id, reason: 'content does not match its hash' } };
          prev = r.hash;
          checked++;
        }
        afterId = rows[rows.length - 1]!.id;
      }
      return { ok: true, checked };
    },
  };
}
export type AuditService = ReturnType<typeof createAuditService>;
