/**
 * Storing a flagged clock again (a retry) on a real PGlite through the real migrations. The flag is
 * only an audit row, so a retry after a write that committed but reported a failure must find that
 * row and not append a second; a retry after a write that never committed must append it; a flag
 * stored before the event's first attempt began must not stand in for it.
 */
import { randomUUID } from 'node:crypto';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { openDatabase, type Database } from '../../server/db/client';
import { runRepository } from '../../server/db/repositories/run.repository';
import { createAuditService, type AuditService } from '../../server/services/audit.service';
import { createRunEventWriter, type StoreAttempts } from '../../server/services/run-events';
import type { RunEvent } from '../../shared/schemas/stream';

let database: Database;
let audit: AuditService;
/** How the next audit append fails: before it is written, or after it committed. */
let fault: 'before' | 'after' | undefined;

beforeAll(async () => {
  database = await openDatabase({});
  audit = createAuditService(database.db);
}, 60_000);
afterAll(async () => {
  await database?.close();
});

function writer() {
  const faulty: AuditService = {
    ...audit,
    record: async (...args) => {
      const f = fault;
      fault = undefined;
      if (f === 'before') throw new Error('injected: the append failed');
      const row = await audit.record(...args);
      if (f === 'after') throw new Error('injected: the append committed, then the connection dropped');
      return row;
    },
  };
  return createRunEventWriter({ runs: runRepository(database.db), audit: faulty, resultsOf: async () => null });
}

const clock = (runId: string): RunEvent => ({ type: 'run.warned', runId, index: 0, kind: 'clock', message: 'sender clock 90 s ahead', ratePctSpanPerMin: null });
const flags = async (runId: string) => (await audit.list({ entity: 'run', entityId: runId })).filter((r) => r.action === 'run.clock-flagged');

/** Stores `e` as the retry loop does: a failed attempt, then the next with the same attempt record. */
async function storeTwice(w: ReturnType<typeof writer>, e: RunEvent): Promise<void> {
  const tries: StoreAttempts = { attempt: 1, firstAt: Date.now() };
  await expect(w.store(e, tries)).rejects.toThrow(/injected/);
  tries.attempt++;
  await w.store(e, tries);
}

describe('a retried clock flag', () => {
  it('is not appended again when the failed attempt had committed', async () => {
    const runId = randomUUID();
    fault = 'after';
    await storeTwice(writer(), clock(runId));
    expect(await flags(runId)).toHaveLength(1);
    expect((await audit.verify()).ok).toBe(true);
  });

  it('is appended when the failed attempt had not', async () => {
    const runId = randomUUID();
    fault = 'before';
    await storeTwice(writer(), clock(runId));
    expect(await flags(runId)).toHaveLength(1);
  });

  it('is appended when an identical flag was stored before its first attempt', async () => {
    const runId = randomUUID();
    const w = writer();
    await w.store(clock(runId));
    // A later millisecond: the earlier flag predates this event's first attempt.
    const t = Date.now();
    while (Date.now() === t) await new Promise((r) => setTimeout(r, 1));
    fault = 'before';
    await storeTwice(w, clock(runId));
    expect(await flags(runId)).toHaveLength(2);
  });
});
