/**
 * Bench identity (`/api/benches`): which benches besides this server's own may feed the hub, and
 * with what credential. A bench agent is registered by a lead or an admin and gets a random token,
 * shown once; only its SHA-256 is stored, and revoking the bench ends the token at once. A browser
 * forwarding Web Serial feeds only its signed-in user's own browser bench. The number of registered
 * benches is bounded.
 */
import { createHash, randomBytes, timingSafeEqual } from 'node:crypto';
import { BROWSER_BENCH_PREFIX, browserBenchIdOf, type BenchList, type BenchRecord, type RegisterBenchBody, type RegisteredBench } from '../../shared/schemas/benches';
import type { Db } from '../db/client';
import { benchRegistryRepository, type BenchRow } from '../db/repositories/bench-registry.repository';
import { badRequest, conflict, notFound } from '../errors';
import { allows } from '../http/policy';
import type { AuditService } from './audit.service';
import type { SessionUser } from './auth.service';

/** Agent tokens start with this, so one found in a log or a file is recognisable. */
export const AGENT_TOKEN_PREFIX = 'spb_';

/** Options of {@link createBenchRegistry}. */
export interface BenchRegistryOptions {
  /** This server's own bench id (its ports); never registrable, never fed from outside. */
  localBenchId: string;
  /** Most benches that may be registered, revoked ones included. Default 100. */
  maxBenches?: number;
}

const sha256 = (s: string) => createHash('sha256').update(s).digest('hex');

function toRecord(r: BenchRow): BenchRecord {
  return {
    id: r.id,
    kind: r.kind,
    label: r.label,
    tokenHint: r.tokenHint,
    createdAt: r.createdAt.toISOString(),
    createdBy: r.createdBy,
    revokedAt: r.revokedAt ? r.revokedAt.toISOString() : null,
    active: !r.revokedAt,
  };
}

export function createBenchRegistry(db: Db, audit: AuditService, o: BenchRegistryOptions) {
  const repo = benchRegistryRepository(db);
  const maxBenches = o.maxBenches ?? 100;
  /** Active agent benches by token hash, and by id (kept in step with every register and revoke). */
  const byHash = new Map<string, BenchRow>();
  const active = new Map<string, BenchRow>();
  const revokedListeners: ((benchId: string) => void)[] = [];

  function remember(r: BenchRow): void {
    if (r.revokedAt) return;
    byHash.set(r.tokenHash, r);
    active.set(r.id, r);
  }

  return {
    localBenchId: o.localBenchId,
    maxBenches,

    /** Loads the active benches (start-up). */
    async load(): Promise<void> {
      byHash.clear();
      active.clear();
      for (const r of await repo.list()) remember(r);
    },

    async list(actor: SessionUser): Promise<BenchList> {
      return {
        items: (await repo.list()).map(toRecord),
        localBenchId: o.localBenchId,
        browserBenchId: allows('jobs.perform', actor.role) ? browserBenchIdOf(actor.id) : null,
        limit: maxBenches,
      };
    },

    /** Registers an agent bench; the reply holds its token, which is never shown again. */
    async register(actor: SessionUser, body: RegisterBenchBody): Promise<RegisteredBench> {
      if (body.id === o.localBenchId) throw badRequest(`${body.id} is this server's own bench`, { id: ['This server\u2019s own bench cannot be registered'] });
      if (body.id.startsWith(BROWSER_BENCH_PREFIX)) throw badRequest('Browser benches are not registered', { id: [`Names starting with ${BROWSER_BENCH_PREFIX} are for browsers`] });
      if (await repo.get(body.id)) throw conflict(`A bench named ${body.id} is already registered (a revoked name stays retired)`);
      if ((await repo.count()) >= maxBenches) throw conflict(`At most ${maxBenches} benches may be registered`);
      const token = `${AGENT_TOKEN_PREFIX}${randomBytes(32).toString('base64url')}`;
      const row = await repo.create({ id: body.id, kind: 'agent', label: body.label, tokenHash: sha256(token), tokenHint: token.slice(0, AGENT_TOKEN_PREFIX.length + 6), createdBy: actor.id });
      remember(row);
      await audit.record(actor, 'bench.registered', 'bench', row.id, undefined, { id: row.id, label: row.label, tokenHint: row.tokenHint });
      return { bench: toRecord(row), token };
    },

    /** Revokes a bench: its token stops working at once and its open connections are closed. */
    async revoke(actor: SessionUser, id: string): Promise<BenchRecord> {
      const row = await repo.get(id);
      if (!row) throw notFound('No such bench');
      if (row.revokedAt) return toRecord(row);
      const done = (await repo.revoke(id, actor.id))!;
      byHash.delete(row.tokenHash);
      active.delete(row.id);
      await audit.record(actor, 'bench.revoked', 'bench', id, { active: true }, { active: false });
      for (const l of revokedListeners) l(id);
      return toRecord(done);
    },

    /** The active agent bench a token belongs to, if any. */
    agentOfToken(token: string): BenchRow | undefined {
      if (!token.startsWith(AGENT_TOKEN_PREFIX) || token.length > 200) return undefined;
      const h = sha256(token);
      const row = byHash.get(h);
      // The map lookup already matched; compare again in constant time for good measure.
      return row && timingSafeEqual(Buffer.from(row.tokenHash), Buffer.from(h)) ? row : undefined;
    },

    /** Whether an agent bench is registered and not revoked. */
    isActiveAgent(benchId: string): boolean {
      return active.has(benchId);
    },

    /** Called with the bench id whenever a bench is revoked. */
    onRevoked(listener: (benchId: string) => void): void {
      revokedListeners.push(listener);
    },

    /**
     * Whether a run may be started on a bench by this user: this server's own bench, an active
     * agent bench, or the user's own browser bench. Any other name is refused.
     */
    mayRunOn(benchId: string, actor: { id: string }): boolean {
      return benchId === o.localBenchId || active.has(benchId) || benchId === browserBenchIdOf(actor.id);
    },
  };
}
export type BenchRegistry = ReturnType<typeof createBenchRegistry>;
