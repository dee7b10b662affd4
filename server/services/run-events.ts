/**
 * The persistence step of the capture path: what each run event changes is stored (point state
 * and flags, a capture with its audit event in one transaction, the run's status and results, a
 * flagged clock) before the event is published.
 */
import type { EvaluateOutput } from '../../shared/calc';
import type { RunEvent } from '../../shared/schemas/stream';
import type { Db } from '../db/client';
import type { RunRepository, RunRow } from '../db/repositories/run.repository';
import type { AuditService } from './audit.service';

export interface RunEventWriterDeps {
  runs: RunRepository;
  audit: AuditService;
  /** The results a run ends with (computed from its stored points). */
  resultsOf: (row: RunRow) => Promise<EvaluateOutput | null>;
}

export function createRunEventWriter({ runs: runsRepo, audit, resultsOf }: RunEventWriterDeps) {
  /** State and flags last stored per point (`runId/index`), so repeated hold progress costs no write. */
  const storedPoint = new Map<string, string>();

  async function store(e: RunEvent): Promise<void> {
    switch (e.type) {
      case 'point.changed': {
        const key = `${e.runId}/${e.index}`;
        const value = JSON.stringify([e.state, e.flags]);
        if (storedPoint.get(key) === value) return;
        // 'captured' is stored only with its capture (point.captured, just before); if that write
        // failed, this change is neither stored nor shown.
        if (e.state === 'captured') throw new Error(`point ${e.index} of run ${e.runId} is not stored as captured; its capture was not stored`);
        // A point that is not captured holds no capture (a redo clears it).
        await runsRepo.updatePoint(e.runId, e.index, { state: e.state, flags: e.flags, capture: null, reason: null });
        storedPoint.set(key, value);
        return;
      }
      case 'point.captured': {
        const by = e.capture.by;
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
        storedPoint.set(`${e.runId}/${e.index}`, JSON.stringify(['captured', e.flags]));
        return;
      }
      case 'run.changed': {
        const ended = e.status === 'complete' || e.status === 'aborted';
        if (!ended) {
          await runsRepo.update(e.runId, { status: e.status });
          return;
        }
        const row = await runsRepo.get(e.runId);
        const results = row ? await resultsOf(row) : null;
        await runsRepo.update(e.runId, { status: e.status, endedAt: new Date(), results });
        await audit.record(null, `run.${e.status === 'complete' ? 'completed' : 'aborted'}`, 'run', e.runId, undefined, { status: e.status });
        for (const key of storedPoint.keys()) if (key.startsWith(`${e.runId}/`)) storedPoint.delete(key);
        return;
      }
      case 'run.warned':
        // A sender's implausible clock is flagged on the run's record, not only shown live.
        if (e.kind === 'clock') await audit.record(null, 'run.clock-flagged', 'run', e.runId, undefined, { index: e.index, message: e.message });
        return;
    }
  }

  return {
    /** Stores what `e` changes; throws (and nothing is published) when it cannot be stored. */
    store,
    /** The points of a run loaded after a restart, as stored. */
    remember(runId: string, rows: readonly { index: number; state: string; flags: unknown }[]): void {
      for (const r of rows) storedPoint.set(`${runId}/${r.index}`, JSON.stringify([r.state, r.flags]));
    },
  };
}
