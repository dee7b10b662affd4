/**
 * Forwarded lines (`lines.forwarded` on `/ws`): who may feed what, server time, and exactly-once
 * storage. Rules of evidence (DESIGN.md §4):
 *
 * - A registered, unrevoked bench agent feeds only its own bench, into whatever run is on it.
 * - A signed-in browser (a technician's Web Serial) feeds only its user's own browser bench, and
 *   only into a run that user performs (started). The session is checked again for every batch, so
 *   a signed-out, expired or deactivated sender is refused at once.
 * - Every other bench name is refused (nothing stored, no bench created).
 * - Each sender numbers its batches; a batch is acknowledged (`lines.acked`) only once its lines
 *   are durable (journal-synced), and a batch at or below the sender's last accepted number is a
 *   duplicate: acknowledged, not stored again. The last accepted number is kept in the database;
 *   after a restart, a resent batch whose lines were stored before its number was recorded is
 *   recognised by its lines (same device and raw line, in order, after the last recorded ones).
 */
import type { Logger } from 'pino';
import { browserBenchIdOf } from '../../shared/schemas/benches';
import type { ClientMessage, StreamMessage } from '../../shared/schemas/stream';
import { SenderClock, type SenderClockOptions } from '../bench/forward-clock';
import type { SampleSource } from '../bench/hub';
import type { Db } from '../db/client';
import { benchRegistryRepository } from '../db/repositories/bench-registry.repository';
import { allows } from '../http/policy';
import type { AuthService, SessionUser } from './auth.service';
import type { BenchService } from './bench.service';
import type { BenchRegistry } from './bench-registry.service';

export type LinesForwarded = Extract<ClientMessage, { type: 'lines.forwarded' }>;
export type LinesAcked = Extract<StreamMessage, { type: 'lines.acked' }>;

/** Who is on the other end of a socket. */
export type ForwardPrincipal = { kind: 'user'; user: SessionUser; token: string } | { kind: 'agent'; benchId: string };

/** How the handler answers the sender. */
export interface ForwardReply {
  send(m: LinesAcked): void;
  /** Ends the connection (the sender may no longer feed anything). */
  close(code: number, reason: string): void;
}

/** Options of {@link createForwardService}. */
export interface ForwardServiceOptions {
  logger: Logger;
  /** Batches one sender may have waiting; beyond it the connection is closed (1013). Default 64. */
  maxQueuedPerSender?: number;
  /** Senders kept in memory; the idle ones beyond it are forgotten (their numbers stay in the database). Default 1 000. */
  maxSenders?: number;
  clock?: SenderClockOptions;
}

interface SenderState {
  key: string;
  benchId: string;
  chain: Promise<void>;
  queued: number;
  loaded: boolean;
  /** Last accepted batch number. */
  batchSeq: number;
  /** Hub seq of the last stored line of this sender (the point after which its next lines lie). */
  lastSeq: number;
  /** After a (re)load: the next batches may have been stored before their numbers were recorded. */
  recovering: boolean;
  /** Settles once the last accepted batch is durable (a duplicate of it is acknowledged only then). */
  durable: Promise<void>;
  clock: SenderClock;
  /** Clock warnings already given, per run and kind. */
  warned: Set<string>;
  lastUsed: number;
}

/** Close codes (4000–4999 are the application's, RFC 6455 §7.4.2). */
export const CLOSE_SESSION_ENDED = 4401;
export const CLOSE_REVOKED = 4403;

export function createForwardService(db: Db, deps: { bench: BenchService; registry: BenchRegistry; auth: AuthService }, o: ForwardServiceOptions) {
  const repo = benchRegistryRepository(db);
  const senders = new Map<string, SenderState>();
  const maxQueued = o.maxQueuedPerSender ?? 64;
  const maxSenders = o.maxSenders ?? 1000;
  const performers = new Map<string, string | null>();
  const stats = { batches: 0, stored: 0, duplicates: 0, refused: 0, backlogLines: 0, clockWarnings: 0 };

  async function performerOf(runId: string): Promise<string | null> {
    if (performers.has(runId)) return performers.get(runId)!;
    const p = (await repo.performers([runId])).get(runId) ?? null;
    if (performers.size > 10_000) performers.clear();
    performers.set(runId, p);
    return p;
  }

  function stateOf(key: string, benchId: string): SenderState {
    let s = senders.get(key);
    if (!s) {
      if (senders.size >= maxSenders) {
        // Forget the longest-idle senders with nothing queued; their last numbers are in the database.
        const idle = [...senders.values()].filter((x) => x.queued === 0).sort((a, b) => a.lastUsed - b.lastUsed);
        for (const x of idle.slice(0, Math.max(1, senders.size - maxSenders + 1))) senders.delete(x.key);
      }
      s = { key, benchId, chain: Promise.resolve(), queued: 0, loaded: false, batchSeq: 0, lastSeq: 0, recovering: false, durable: Promise.resolve(), clock: new SenderClock(o.clock), warned: new Set(), lastUsed: 0 };
      senders.set(key, s);
    }
    s.lastUsed = performance.now();
    return s;
  }

  /** Whether the principal may feed `benchId`; the refusal's reason and whether to end the connection otherwise. */
  async function authorize(p: ForwardPrincipal, benchId: string): Promise<{ ok: true; source: SampleSource; performer: string | null } | { ok: false; reason: string; close?: number }> {
    if (p.kind === 'agent') {
      if (!deps.registry.isActiveAgent(p.benchId)) return { ok: false, reason: `Bench ${p.benchId} is not registered or was revoked`, close: CLOSE_REVOKED };
      if (benchId !== p.benchId) return { ok: false, reason: `This agent feeds bench ${p.benchId}, not ${benchId}` };
      return { ok: true, source: { kind: 'agent', id: p.benchId }, performer: null };
    }
    let user: SessionUser;
    try {
      user = await deps.auth.verify(p.token);
    } catch (e) {
      return { ok: false, reason: e instanceof Error ? e.message : 'Sign in first', close: CLOSE_SESSION_ENDED };
    }
    if (!allows('jobs.perform', user.role)) return { ok: false, reason: 'Your role does not forward instrument lines' };
    const own = browserBenchIdOf(user.id);
    if (benchId !== own) return { ok: false, reason: `A browser feeds only its user's own bench (${own}), not ${benchId}` };
    return { ok: true, source: { kind: 'browser', id: user.id }, performer: user.id };
  }

  /**
   * How many of the batch's lines (in order, from the first) are already stored after the sender's
   * last recorded line: a batch stored before a restart let its number be recorded.
   */
  async function storedPrefix(s: SenderState, m: LinesForwarded): Promise<{ count: number; lastSeq: number }> {
    const rows = await repo.samplesAfter(s.benchId, s.lastSeq, m.lines.length);
    let r = 0;
    let lastSeq = s.lastSeq;
    let i = 0;
    for (; i < m.lines.length; i++) {
      const l = m.lines[i]!;
      const line = deps.bench.storedLine(l.device, l.raw);
      // Lines that are never stored (refused at the edge, or protocol text such as an echo) do not count either way.
      if (line === undefined) continue;
      const row = rows[r];
      if (!row || row.device !== l.device || row.raw !== line) break;
      lastSeq = row.seq;
      r++;
    }
    return { count: r === 0 ? 0 : i, lastSeq };
  }

  async function process(p: ForwardPrincipal, m: LinesForwarded, s: SenderState, reply: ForwardReply): Promise<void> {
    stats.batches++;
    const ack = (status: LinesAcked['status'], stored: number, reason: string | null) =>
      reply.send({ type: 'lines.acked', seq: 0, senderId: m.senderId, batchSeq: m.batchSeq, status, stored, reason });
    // Acknowledgements settle every earlier batch at the sender, so even a refusal waits for the earlier batches to be durable.
    const refuse = (reason: string, close?: number) => {
      stats.refused++;
      const earlier = s.durable;
      s.durable = earlier.then(() => {
        ack('refused', 0, reason);
        if (close) reply.close(close, reason.slice(0, 120));
      });
    };
    const auth = await authorize(p, m.benchId);
    if (!auth.ok) return refuse(auth.reason, auth.close);
    // One numbered queue feeds one bench: the bench of its first accepted batch.
    if (!s.loaded) s.benchId = m.benchId;
    else if (s.benchId !== m.benchId) return refuse(`Sender ${m.senderId} feeds ${s.benchId}, not ${m.benchId}`);
    if (!s.loaded) {
      const row = await repo.sender(s.key);
      if (row) {
        s.batchSeq = row.batchSeq;
        s.lastSeq = row.lastSeq;
        s.recovering = true;
      } else {
        // Recorded before its first line is stored, so that after a crash its lines are looked for only from here.
        s.lastSeq = deps.bench.hub.latestSeq;
        await repo.markSender(s.key, s.benchId, 0, s.lastSeq);
      }
      s.loaded = true;
    }
    if (m.batchSeq <= s.batchSeq) {
      stats.duplicates++;
      await s.durable;
      return ack('duplicate', 0, null);
    }
    let skip = 0;
    if (s.recovering) {
      const prefix = await storedPrefix(s, m);
      skip = prefix.count;
      s.lastSeq = prefix.lastSeq;
      // Once a batch is found not (wholly) stored, no later one can be.
      if (skip < m.lines.length) s.recovering = false;
      if (skip === m.lines.length && skip > 0) {
        s.batchSeq = m.batchSeq;
        void repo.markSender(s.key, s.benchId, s.batchSeq, s.lastSeq).catch((err: unknown) => o.logger.warn({ err }, 'recording a forwarding sender failed'));
        stats.duplicates++;
        return ack('duplicate', 0, null);
      }
    }
    // A browser feeds only a run its user performs; the run is read again after the lookup in case it changed meanwhile.
    const hub = deps.bench.hub;
    for (let attempt = 0; ; attempt++) {
      const runId = hub.runOf(m.benchId);
      if (auth.performer !== null && runId !== null) {
        const performer = await performerOf(runId);
        if (hub.runOf(m.benchId) !== runId) {
          if (attempt < 3) continue;
          return refuse('The run on this bench changed; send again');
        }
        if (performer !== auth.performer) return refuse('A run that you do not perform is active on this bench');
      }
      break;
    }
    const batch = skip ? { ...m, lines: m.lines.slice(skip) } : m;
    // Placed at the moment it is taken in, so a bench's lines never go back in time.
    const r = deps.bench.ingestForwarded(batch, { source: auth.source, clock: s.clock });
    stats.backlogLines += r.backlog;
    const runId = hub.runOf(m.benchId);
    if (r.issues.length && runId) {
      for (const issue of r.issues) {
        const k = `${runId}:${issue.kind}`;
        if (s.warned.has(k)) continue;
        s.warned.add(k);
        stats.clockWarnings++;
        deps.bench.engine(m.benchId).warnExternal('clock', issue.message);
        o.logger.warn({ sender: s.key, benchId: m.benchId, runId, skewMs: s.clock.skewMs, issue: issue.kind }, 'implausible sender clock');
      }
    }
    // Accepted: later batches go on while this one becomes durable; its acknowledgement waits for that.
    s.batchSeq = m.batchSeq;
    if (r.lastSeq) s.lastSeq = r.lastSeq;
    const batchSeq = s.batchSeq;
    const lastSeq = s.lastSeq;
    const count = r.accepted + r.rejected;
    stats.stored += count;
    s.durable = (r.lastSeq ? deps.bench.writer.whenAcked(r.lastSeq) : s.durable).then(() => {
      // Recorded after the lines are durable; a crash before it is covered by the stored-lines check above.
      void repo.markSender(s.key, s.benchId, batchSeq, lastSeq).catch((err: unknown) => o.logger.warn({ err }, 'recording a forwarding sender failed'));
      ack('stored', count, null);
    });
  }

  return {
    stats: () => ({ ...stats, senders: senders.size }),

    /** Forgets senders not heard from for 30 days (start-up). */
    async prune(now = Date.now()): Promise<void> {
      await repo.pruneSenders(new Date(now - 30 * 86_400_000));
    },

    /**
     * Takes one forwarded batch from a socket; batches of one sender are handled one after another,
     * in the order they arrived.
     */
    handle(p: ForwardPrincipal, m: LinesForwarded, reply: ForwardReply): void {
      const key = p.kind === 'agent' ? `agent:${p.benchId}:${m.senderId}` : `browser:${p.user.id}:${m.senderId}`;
      const s = stateOf(key, m.benchId);
      if (s.queued >= maxQueued) {
        reply.close(1013, 'Too many batches waiting; send fewer at a time');
        return;
      }
      s.queued++;
      s.chain = s.chain
        .then(() => process(p, m, s, reply))
        .catch((err: unknown) => {
          o.logger.error({ err, sender: key }, 'forwarded batch failed');
          // Not acknowledged: the sender keeps the batch and sends it again after reconnecting.
          s.loaded = false;
          reply.close(1011, 'The batch could not be stored; send it again');
        })
        .finally(() => {
          s.queued--;
        });
    },
  };
}
export type ForwardService = ReturnType<typeof createForwardService>;
