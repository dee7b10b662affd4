/**
 * The capture path retries a run event whose store fails. The run repository the server stores
 * through (real PGlite, real migrations) is wrapped at boot with injected faults: a write that fails
 * before it reaches the database, or one that commits and then fails (a connection lost on COMMIT),
 * the case where a blind retry would store the event twice. A real one-point mode check on the
 * simulated rig (HOLD_SECONDS = 1) then runs through them. Retry delays are shortened through the
 * boot option (4 attempts, 10 ms doubling to 40 ms), so no test waits on the default backoff.
 */
import pino from 'pino';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { RunRepository } from '../../server/db/repositories/run.repository';
import { RunSchema, type Run } from '../../shared/schemas/runs';
import type { StreamMessage } from '../../shared/schemas/stream';
import { ApiClient, demoEmail, startTestServer, type TestServer } from '../helpers/test-server';
import { prepareJob, streamClient, until } from './runs-helpers';

const ATTEMPTS = 4;

/** How an injected fault fails a write: before it reaches the database, or after it committed. */
type Fault = 'before' | 'after';
const faults = { capture: [] as Fault[], pointChange: [] as Fault[], end: [] as Fault[], captureAlways: false };
/** Every write that committed (whatever was reported after it), with the hub's latest seq right then. */
const committed: { what: 'point.captured' | 'point.changed' | 'run.ended'; runId: string; seq: number }[] = [];

let srv: TestServer;
const faulty = (repo: RunRepository): RunRepository => ({
  ...repo,
  updatePoint: async (runId, index, values, alsoIn) => {
    const fault = alsoIn ? (faults.captureAlways ? 'before' : faults.capture.shift()) : faults.pointChange.shift();
    if (fault === 'before') throw new Error('injected: the point write failed');
    await repo.updatePoint(runId, index, values, alsoIn);
    committed.push({ what: alsoIn ? 'point.captured' : 'point.changed', runId, seq: srv.bench.hub.latestSeq });
    if (fault === 'after') throw new Error('injected: the point write committed, then the connection dropped');
  },
  update: async (id, values, alsoIn) => {
    const fault = values.endedAt ? faults.end.shift() : undefined;
    if (fault === 'before') throw new Error('injected: the run write failed');
    await repo.update(id, values, alsoIn);
    if (values.endedAt) committed.push({ what: 'run.ended', runId: id, seq: srv.bench.hub.latestSeq });
    if (fault === 'after') throw new Error('injected: the run write committed, then the connection dropped');
  },
});

/** What the server logged at warn and above. */
const logs: { level: number; msg: string; runId?: string; event?: string; attempt?: number }[] = [];
const logger = pino({ level: 'warn' }, { write: (line: string) => void logs.push(JSON.parse(line)) });
const WARN = 40;
const ERROR = 50;

let tech: ApiClient;
let admin: ApiClient;
let jobId: string;

beforeAll(async () => {
  srv = await startTestServer({ env: { HOLD_SECONDS: '1' }, boot: { wrapRunRepository: faulty, logger, runStoreRetry: { attempts: ATTEMPTS, backoff: { initialMs: 10, maxMs: 40 } } } });
  tech = new ApiClient(srv.url);
  admin = new ApiClient(srv.url);
  const lead = new ApiClient(srv.url);
  await Promise.all([tech.login(demoEmail('tech')), admin.login(demoEmail('admin')), lead.login(demoEmail('lead'))]);
  jobId = await prepareJob(srv, lead);
}, 180_000);
afterAll(async () => {
  await srv?.close();
});

const getRun = async (id: string): Promise<Run> => RunSchema.parse((await tech.get(`/api/runs/${id}`)).body);
const sim = async (body: unknown) => {
  const r = await admin.post('/api/sim', body);
  expect(r.status, JSON.stringify(r.body)).toBe(200);
};
const auditOf = async (runId: string) => (await admin.get(`/api/audit?entity=run&entityId=${runId}`)).body.items as { action: string }[];
const ofRun = (messages: StreamMessage[], runId: string) => messages.filter((m) => 'runId' in m && m.runId === runId);

/** Vents the rig, starts a one-point mode check (25 % DP), arms `arm`'s faults, then brings the rig to the point. */
async function modeCheck(arm: () => void): Promise<{ run: Run; ws: ReturnType<typeof streamClient> }> {
  await sim({ autopilot: 'stop', source: { timeConstantS: 0.1 }, setpoint: { value: 0 } });
  await until(() => Math.abs(srv.rig!.snapshot().appliedDp) < 0.01, 10_000, 'vented');
  const ws = streamClient(srv, tech);
  await ws.opened;
  const r = await tech.post(`/api/jobs/${jobId}/runs`, { kind: 'mode-check' });
  expect(r.status, JSON.stringify(r.body)).toBe(201);
  const run = RunSchema.parse(r.body);
  arm();
  await sim({ setpoint: { value: run.points[0]!.targetDp } });
  return { run, ws };
}

/** Waits for the run's end on the stream, then for the capture path to settle. */
async function finished(run: Run, ws: ReturnType<typeof streamClient>): Promise<void> {
  await until(() => ofRun(ws.messages, run.id).some((m) => m.type === 'run.changed' && m.status === 'complete'), 30_000, 'run complete on the stream');
  await srv.runs.settle();
}

describe('a run event whose store fails', () => {
  it('is stored again until it goes through: exactly once, published in order only after it is stored, and the run completes', async () => {
    const { run, ws } = await modeCheck(() => {
      faults.pointChange = ['before'];
      // The capture: fails clean, then commits but reports a failure; the third attempt must find it stored.
      faults.capture = ['before', 'after'];
      // The run's end commits, then reports a failure.
      faults.end = ['after'];
    });
    try {
      await finished(run, ws);
      expect(faults).toMatchObject({ pointChange: [], capture: [], end: [] });

      // Stored exactly once: one committed capture and one committed end, one audit row each, the trail whole.
      const mine = committed.filter((c) => c.runId === run.id);
      expect(mine.filter((c) => c.what === 'point.captured')).toHaveLength(1);
      expect(mine.filter((c) => c.what === 'run.ended')).toHaveLength(1);
      const actions = (await auditOf(run.id)).map((a) => a.action);
      expect(actions.filter((a) => a === 'run.point-captured')).toHaveLength(1);
      expect(actions.filter((a) => a === 'run.completed')).toHaveLength(1);
      expect((await admin.get('/api/audit/verify')).body.ok).toBe(true);
      const stored = await getRun(run.id);
      expect(stored.status).toBe('complete');
      expect(stored.points[0]!.state).toBe('captured');

      // Published once each, in the engine's order, and each only after its write committed.
      const shown = ofRun(ws.messages, run.id);
      const captured = shown.filter((m) => m.type === 'point.captured');
      const ended = shown.filter((m) => m.type === 'run.changed' && m.status === 'complete');
      expect(captured).toHaveLength(1);
      expect(ended).toHaveLength(1);
      expect(captured[0]!.seq).toBeLessThan(ended[0]!.seq);
      expect(captured[0]!.seq).toBeGreaterThan(mine.find((c) => c.what === 'point.captured')!.seq);
      expect(ended[0]!.seq).toBeGreaterThan(mine.find((c) => c.what === 'run.ended')!.seq);
      expect(shown.map((m) => m.seq)).toEqual(shown.map((m) => m.seq).sort((a, b) => a - b));
      if (captured[0]!.type === 'point.captured') expect(stored.points[0]!.capture).toEqual(captured[0]!.capture);
      // The point's states reached the stream in order, the one whose first write failed among them.
      const states = shown.flatMap((m) => (m.type === 'point.changed' ? [m.state] : []));
      expect(states.indexOf('holding')).toBeGreaterThanOrEqual(0);
      expect(states.indexOf('holding')).toBeLessThan(states.indexOf('captured'));

      // Each retry warned with the run, the event and the attempt; nothing was given up.
      const warned = logs.filter((l) => l.level === WARN && l.runId === run.id).map((l) => `${l.event} ${l.attempt}`);
      expect(warned).toEqual(expect.arrayContaining(['point.changed 1', 'point.captured 1', 'point.captured 2', 'run.changed 1']));
      expect(warned).toHaveLength(4);
      expect(logs.filter((l) => l.level >= ERROR && l.runId === run.id)).toEqual([]);
    } finally {
      ws.close();
      faults.capture = [];
      faults.pointChange = [];
      faults.end = [];
    }
  }, 120_000);

  it('is given up after the last attempt: logged as an error and never shown, while later events go through and the service stays usable', async () => {
    const { run, ws } = await modeCheck(() => {
      faults.captureAlways = true;
    });
    try {
      await finished(run, ws);
      // Given up: every attempt warned but the last, which is an error; nothing stored or shown.
      const mine = logs.filter((l) => l.runId === run.id && l.event === 'point.captured');
      expect(mine.filter((l) => l.level === WARN).map((l) => l.attempt)).toEqual([1, 2, 3]);
      expect(mine.filter((l) => l.level === ERROR).map((l) => l.msg)).toEqual(['storing a run event failed; it was not published']);
      const shown = ofRun(ws.messages, run.id);
      expect(shown.filter((m) => m.type === 'point.captured')).toEqual([]);
      expect(shown.filter((m) => m.type === 'point.changed' && m.state === 'captured')).toEqual([]);
      expect(committed.filter((c) => c.runId === run.id && c.what === 'point.captured')).toEqual([]);
      expect((await auditOf(run.id)).map((a) => a.action)).not.toContain('run.point-captured');
      // The event after it (the run's end) was stored and shown.
      const stored = await getRun(run.id);
      expect(stored.points[0]!.capture).toBeNull();
      expect(stored.status).toBe('complete');
      expect(shown.filter((m) => m.type === 'run.changed' && m.status === 'complete')).toHaveLength(1);
    } finally {
      ws.close();
      faults.captureAlways = false;
    }

    // Usable afterwards: the next run's capture is stored and shown.
    const next = await modeCheck(() => undefined);
    try {
      await finished(next.run, next.ws);
      expect(ofRun(next.ws.messages, next.run.id).filter((m) => m.type === 'point.captured')).toHaveLength(1);
      expect((await getRun(next.run.id)).points[0]!.state).toBe('captured');
    } finally {
      next.ws.close();
    }
  }, 120_000);
});
