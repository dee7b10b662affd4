/**
 * Stored before shown: a capture reaches the stream and `GET /api/runs/:id` only once its point row
 * is committed. The run repository the server stores through is wrapped at boot with a gate that
 * holds point writes back; the capture engine captures meanwhile, and neither a real WebSocket
 * client nor the API may show the capture until the write goes through. Every capture, and its
 * audit event, names who or what took it; the two commit in one transaction (a failure after the
 * audit row was written leaves neither). HOLD_SECONDS = 1 (an hour for the manual capture), simulated rig driven by set-points.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { RunRepository } from '../../server/db/repositories/run.repository';
import { RunSchema, type Run } from '../../shared/schemas/runs';
import type { StreamMessageOf } from '../../shared/schemas/stream';
import { ApiClient, demoEmail, startTestServer, type TestServer } from '../helpers/test-server';
import { prepareJob, streamClient, until } from './runs-helpers';

/** Holds point writes back while closed. */
const gate = {
  closed: false,
  waiting: [] as (() => void)[],
  close() {
    this.closed = true;
  },
  open() {
    this.closed = false;
    for (const go of this.waiting.splice(0)) go();
  },
  pass(): Promise<void> {
    return this.closed ? new Promise<void>((resolve) => this.waiting.push(resolve)) : Promise.resolve();
  },
};
/** When set, the write that goes with a point update (its audit event) is made, then fails. */
let failAfterAudit = false;
const gated = (repo: RunRepository): RunRepository => ({
  ...repo,
  updatePoint: async (runId, index, values, alsoIn) => {
    await gate.pass();
    const failing =
      alsoIn && failAfterAudit
        ? async (tx: Parameters<typeof alsoIn>[0]) => {
            await alsoIn(tx);
            throw new Error('injected failure after the audit row was written');
          }
        : alsoIn;
    return repo.updatePoint(runId, index, values, failing);
  },
});

let srv: TestServer;
let tech: ApiClient;
let admin: ApiClient;
let jobId: string;
let techId: string;

/** Boots the server with the gated repository and this hold time, signs in, and prepares the job. */
async function bootServer(holdSeconds: number): Promise<void> {
  // A failed store is retried (run-commit.ts); short delays keep the always-failing case below quick.
  srv = await startTestServer({ env: { HOLD_SECONDS: String(holdSeconds) }, boot: { wrapRunRepository: gated, runStoreRetry: { backoff: { initialMs: 10, maxMs: 40 } } } });
  tech = new ApiClient(srv.url);
  admin = new ApiClient(srv.url);
  const lead = new ApiClient(srv.url);
  await Promise.all([tech.login(demoEmail('tech')), admin.login(demoEmail('admin')), lead.login(demoEmail('lead'))]);
  const me = (await tech.get('/api/auth/me')).body as { id?: string; user?: { id: string } };
  techId = me.user?.id ?? me.id!;
  jobId = await prepareJob(srv, lead);
}

beforeAll(() => bootServer(1), 180_000);
afterAll(async () => {
  gate.open();
  await srv?.close();
});

const getRun = async (id: string): Promise<Run> => RunSchema.parse((await tech.get(`/api/runs/${id}`)).body);
const sim = async (body: unknown) => {
  const r = await admin.post('/api/sim', body);
  expect(r.status, JSON.stringify(r.body)).toBe(200);
};
type Captured = StreamMessageOf<'point.captured'>;

/** Vents the rig, then starts a one-point mode check (25 % DP). */
async function startModeCheck(): Promise<Run> {
  await sim({ autopilot: 'stop', source: { timeConstantS: 0.1 }, setpoint: { value: 0 } });
  await until(() => Math.abs(srv.rig!.snapshot().appliedDp) < 0.01, 10_000, 'vented');
  const r = await tech.post(`/api/jobs/${jobId}/runs`, { kind: 'mode-check' });
  expect(r.status, JSON.stringify(r.body)).toBe(201);
  return RunSchema.parse(r.body);
}

describe('stored before shown', () => {
  it('a hands-free capture reaches neither the stream nor GET /api/runs/:id before its point row is written', async () => {
    const run = await startModeCheck();
    const ws = streamClient(srv, tech);
    await ws.opened;
    const engine = srv.runs.engines.get('bench-1');
    gate.close();
    await sim({ setpoint: { value: run.points[0]!.targetDp } });
    // The engine (memory) captures the point while its write is held back.
    await until(() => engine.snapshot()?.points[0]?.state === 'captured', 20_000, 'engine captured');
    // Let everything the hub had published by now reach the client: wait for a sample numbered after it.
    const mark = srv.bench.hub.latestSeq;
    await until(() => ws.messages.some((m) => m.type === 'sample.received' && m.seq > mark), 5_000, 'a later sample');
    expect(ws.messages.filter((m) => m.type === 'point.captured' && m.runId === run.id)).toEqual([]);
    expect(ws.messages.filter((m) => m.type === 'point.changed' && m.runId === run.id && m.state === 'captured')).toEqual([]);
    const meanwhile = await getRun(run.id);
    expect(meanwhile.points[0]!.state).not.toBe('captured');
    expect(meanwhile.points[0]!.capture).toBeNull();
    expect(meanwhile.status).toBe('running');

    gate.open();
    await until(() => ws.messages.some((m) => m.type === 'point.captured' && m.runId === run.id), 10_000, 'captured on the stream');
    const msg = ws.messages.find((m): m is Captured => m.type === 'point.captured' && m.runId === run.id)!;
    // Shown now, and stored: the API reads it back from the database, identical to the message.
    const after = await getRun(run.id);
    expect(after.points[0]!.state).toBe('captured');
    expect(after.points[0]!.capture).toEqual(msg.capture);
    expect(after.points[0]!.flags).toEqual(msg.flags);

    // Who or what captured it: the bench, the samples' source and the run's performer.
    expect(msg.manual).toBe(false);
    expect(msg.capture.capturedBy).toBeNull();
    expect(msg.capture.by).toEqual({
      kind: 'bench',
      benchId: 'bench-1',
      sources: { pressure: { kind: 'port', id: 'bench-1' }, current: { kind: 'port', id: 'bench-1' } },
      performer: { id: techId, email: demoEmail('tech') },
    });
    // The audit event is not an anonymous system action: it names the bench and the performer.
    await srv.runs.settle();
    const audit = await admin.get(`/api/audit?entity=run&entityId=${run.id}`);
    const ev = (audit.body.items as { action: string; actorId: string | null; actorEmail: string | null; after: { by?: unknown; index?: number } }[]).find(
      (a) => a.action === 'run.point-captured',
    )!;
    expect(ev).toBeDefined();
    expect(ev.actorId).toBeNull();
    expect(ev.actorEmail).toMatch(/bench-1/);
    expect(ev.actorEmail).toMatch(/hands-free/);
    expect(ev.actorEmail).toContain(demoEmail('tech'));
    expect(ev.after.by).toEqual(msg.capture.by);
    expect(ev.after.index).toBe(0);
    ws.close();
  }, 120_000);

  it('stores a capture and its audit event in one transaction: a failure after the audit row leaves neither', async () => {
    const run = await startModeCheck();
    const engine = srv.runs.engines.get('bench-1');
    failAfterAudit = true;
    try {
      await sim({ setpoint: { value: run.points[0]!.targetDp } });
      await until(() => engine.snapshot()?.points[0]?.state === 'captured', 20_000, 'engine captured');
      await srv.runs.settle();
      // The write failed: the point is not stored as captured, and no audit row for it survived.
      const after = await getRun(run.id);
      expect(after.points[0]!.state).not.toBe('captured');
      expect(after.points[0]!.capture).toBeNull();
      const audit = await admin.get(`/api/audit?entity=run&entityId=${run.id}`);
      const actions = (audit.body.items as { action: string }[]).map((a) => a.action);
      expect(actions).toContain('run.started');
      expect(actions).not.toContain('run.point-captured');
      // The chain is still whole (the rolled-back row left no gap behind).
      const verify = await admin.get('/api/audit/verify');
      expect(verify.status).toBe(200);
      expect(verify.body.ok).toBe(true);
    } finally {
      failAfterAudit = false;
      await tech.post(`/api/runs/${run.id}/abort`, {});
    }
  }, 120_000);
});

// With the 1 s hold above, a loaded machine let the hands-free capture finish the one-point run
// between the test seeing "holding" and its manual capture (409 "The run is complete"): the manual
// capture gets a server of its own whose hold is an hour, so the point waits for the technician.
describe('stored before shown, by hand', () => {
  beforeAll(async () => {
    await srv.close();
    await bootServer(3600);
  }, 180_000);

  it('a manual capture answers only once stored, names the user, and its audit event carries the user', async () => {
    const run = await startModeCheck();
    await sim({ setpoint: { value: run.points[0]!.targetDp } });
    await until(async () => (await getRun(run.id)).points[0]!.state === 'holding', 10_000, 'holding');
    const engine = srv.runs.engines.get('bench-1');
    gate.close();
    const answer = tech.post(`/api/runs/${run.id}/points/0/capture`, { reason: 'technician judged the reading steady' });
    await until(() => engine.snapshot()?.points[0]?.state === 'captured', 10_000, 'engine captured');
    let answered: string | false = false;
    void answer.then((a) => (answered = `${a.status} ${JSON.stringify(a.body)}`));
    // Held back: no answer yet, and the API does not show the capture.
    expect((await getRun(run.id)).points[0]!.capture).toBeNull();
    expect(answered, 'the manual capture answered before its write went through').toBe(false);
    gate.open();
    const r = await answer;
    expect(r.status, JSON.stringify(r.body)).toBe(200);
    const p = RunSchema.parse(r.body).points[0]!;
    expect(p.flags).toContain('manual');
    expect(p.capture!.capturedBy).toBe(demoEmail('tech'));
    expect(p.capture!.by).toEqual({ kind: 'user', benchId: 'bench-1', user: { id: techId, email: demoEmail('tech') } });
    const audit = await admin.get(`/api/audit?entity=run&entityId=${run.id}`);
    const ev = (audit.body.items as { action: string; actorId: string | null; actorEmail: string | null; after: { by?: unknown; reason?: string } }[]).find(
      (a) => a.action === 'run.point-captured-manually',
    )!;
    expect(ev.actorId).toBe(techId);
    expect(ev.actorEmail).toBe(demoEmail('tech'));
    expect(ev.after.reason).toBe('technician judged the reading steady');
    expect(ev.after.by).toEqual(p.capture!.by);
  }, 120_000);
});
