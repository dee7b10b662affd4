/**
 * The persistence step of the capture path: what each run event changes is stored (point state
 * and flags, a capture with its audit event in one transaction, the run's status and results, a
 * flagged clock) before the event is published.
 *
 * Storing an event again (a retry, run-commit.ts) is safe. A failed transaction leaves nothing, so
 * the danger is a failure reported after the database committed (a connection lost on COMMIT):
 * point and status updates write the same values again; the writes that append an audit event
 * (a capture, a run's end, a flagged clock) check first, on a retry, whether an earlier attempt of
 * the same event committed, and write nothing if it did.
 */
import type { EvaluateOutput } from '../../shared/calc';
import type { RunEvent } from '../../shared/schemas/stream';
import type { Db } from '../db/client';
import type { RunRepository, RunRow } from '../db/repositories/run.repository';
import { canonical, type AuditService } from './audit.service';

export interface RunEventWriterDeps {
  runs: RunRepository;
  audit: AuditService;
  /** The results a run ends with (computed from its stored points). */
  resultsOf: (row: RunRow) => Promise<EvaluateOutput | null>;
}

/** A failure no retry can mend (the event contradicts what is stored); the event is not stored. */
export class RunEventRefused extends Error {}

/** What the attempts to store one event share (see run-commit.ts). */
export interface StoreAttempts {
  /** 1 on the first attempt; above 1, an earlier attempt may have committed before it failed. */
  attempt: number;
  /** When the first attempt began, ms since the epoch. */
  firstAt: number;
  /** A run's end time, chosen by the first attempt and stored by every one (a retry knows its own write by it). */
  endedAt?: Date;
}

/** The same JSON once stored as jsonb and read back (key order and undefined members aside). */
const sameJson = (a: unknown, b: unknown) => canonical(JSON.parse(JSON.stringify(a ?? null))) === canonical(JSON.parse(JSON.stringify(b ?? null)));

export function createRunEventWriter({ runs: runsRepo, audit, resultsOf }: RunEventWriterDeps) {
  /** State and flags last stored per point (`runId/index`), so repeated hold progress costs no write. */
  const storedPoint = new Map<string, string>();

  /** Whether an earlier attempt committed this audit event: an identical row for the run, written since the first attempt began. */
  async function auditedSince(runId: string, action: string, after: unknown, since: number): Promise<boolean> {
    for (let afterId: number | undefined; ; ) {
      const rows = await audit.list({ entity: 'run', entityId: runId, limit: 1000, afterId });
      if (rows.some((r) => r.action === action && r.at.getTime() >= since && sameJson(r.after, after))) return true;
      if (rows.length < 1000) return false;
      afterId = rows[rows.length - 1]!.id;
    }
  }

  async function store(e: RunEvent, tries: StoreAttempts = { attempt: 1, firstAt: Date.now() }): Promise<void> {
    const retry = tries.attempt > 1;
    switch (e.type) {
      case 'point.changed': {
        const key = `${e.runId}/${e.index}`;
        const value = JSON.stringify([e.state, e.flags]);
        if (storedPoint.get(key) === value) return;
        // 'captured' is stored only with its capture (point.captured, just before); if that write
        // failed, this change is neither stored nor shown.
        if (e.state === 'captured') throw new RunEventRefused(`point ${e.index} of run ${e.runId} is not stored as captured; its capture was not stored`);
        // A point that is not captured holds no capture (a redo clears it).
        await runsRepo.updatePoint(e.runId, e.index, { state: e.state, flags: e.flags, capture: null, reason: null });
        storedPoint.set(key, value);
        return;
      }
      case 'point.captured': {
        const by = e.capture.by;
        const key = `${e.runId}/${e.index}`;
        // A retry whose earlier attempt committed finds the point holding this very capture
        // (its hold times make it unique), with the audit event that committed with it.
        if (retry) {
          const row = (await runsRepo.points(e.runId)).find((r) => r.index === e.index);
          if (row?.state === 'captured' && sameJson(row.capture, e.capture)) {
            storedPoint.set(key, JSON.stringify(['captured', e.flags]));
            return;
          }
        }
        // The capture and its audit event commit together (one transaction).
        const auditIn = (tx: Db) => {
          if (e.manual && by?.kind === 'user') {
            return audit.record(by.user, 'run.point-captured-manually', 'run', e.runId, undefined, { index: e.index, reason: e.capture.manualReason, flags: e.flags, capture: e.capture, by }, tx);
          }
          // Hands-free: the bench captured it after the hold, for the run's performer, from the samples' sources.
          const performer = by?.kind === 'bench' && by.performer ? `; run performed by ${by.performer.email}` : '';
          return audit.record({ nonUser: `bench ${e.benchId} (hands-free capture${performer})` }, 'run.point-captured', 'run', e.runId, undefined, { index: e.index, flags: e.flags, capture: e.capture, by }, tx);
        };
        await runsRepo.updatePoint(e.runId, e.index, { state: 'captured', flags: e.flags, capture: e.capture, reason: e.capture.manualReason }, auditIn);
        storedPoint.set(key, JSON.stringify(['captured', e.flags]));
        return;
      }
      case 'run.changed': {
        const ended = e.status === 'complete' || e.status === 'aborted';
        if (!ended) {
          await runsRepo.update(e.runId, { status: e.status });
          return;
        }
        const endedAt = (tries.endedAt ??= new Date());
        const row = await runsRepo.get(e.runId);
        // An earlier attempt that committed left the run ended at this attempt's own end time.
        const committed = retry && row?.status === e.status && row.endedAt?.getTime() === endedAt.getTime();
        if (!committed) {
          const results = row ? await resultsOf(row) : null;
          // The end and its audit event commit together (one transaction).
          await runsRepo.update(e.runId, { status: e.status, endedAt, results }, (tx) =>
            audit.record(null, `run.${e.status === 'complete' ? 'completed' : 'aborted'}`, 'run', e.runId, undefined, { status: e.status }, tx),
          );
        }
        for (const key of storedPoint.keys()) if (key.startsWith(`${e.runId}/`)) storedPoint.delete(key);
        return;
      }
      case 'run.warned':
        // A sender's implausible clock is flagged on the run's record, not only shown live.
        if (e.kind !== 'clock') return;
        // No stored row names this event: a retry looks for its audit row since the first attempt
        // (an identical flag of the same run in the same millisecond would be taken for it).
        if (retry && (await auditedSince(e.runId, 'run.clock-flagged', { index: e.index, message: e.message }, tries.firstAt))) return;
        await audit.record(null, 'run.clock-flagged', 'run', e.runId, undefined, { index: e.index, message: e.message });
        return;
    }
  }

  return {
    /**
     * Stores what `e` changes; throws (and nothing is published) when it cannot be stored. Safe to
     * call again for the same event with the same `tries` (its `attempt` raised) after a failure.
     */
    store,
    /** The points of a run loaded after a restart, as stored. */
    remember(runId: string, rows: readonly { index: number; state: string; flags: unknown }[]): void {
      for (const r of rows) storedPoint.set(`${runId}/${r.index}`, JSON.stringify([r.state, r.flags]));
    },
  };
}
