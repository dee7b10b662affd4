/**
 * Hands-free capture on the booted app with the simulated rig: the autopilot's run is captured
 * point by point; an injected leak warns and blocks auto-capture; an overshoot flags the point and
 * asks for a re-approach; a disconnect during a hold throws the hold away. HOLD_SECONDS = 2.
 */
import { afterEach, describe, expect, it } from 'vitest';
import { RunSchema, type Run } from '../../shared/schemas/runs';
import type { StreamMessage } from '../../shared/schemas/stream';
import { ApiClient, demoEmail } from '../helpers/test-server';
import { streamClient, until, useRunJob } from './runs-helpers';

const ctx = useRunJob();

/** Runs started and streams opened by the current test (aborted, closed after it, so one failure stays one failure). */
const started: string[] = [];
const streams: { close: () => void }[] = [];
function openStream() {
  const ws = streamClient(ctx.srv, ctx.tech);
  streams.push(ws);
  return ws;
}
async function startRun(kind: 'as-found' | 'as-left' | 'mode-check' = 'as-found'): Promise<Run> {
  const r = await ctx.tech.post(`/api/jobs/${ctx.jobId}/runs`, { kind });
  expect(r.status, JSON.stringify(r.body)).toBe(201);
  const run = RunSchema.parse(r.body);
  started.push(run.id);
  return run;
}
const getRun = async (id: string): Promise<Run> => RunSchema.parse((await ctx.tech.get(`/api/runs/${id}`)).body);
const sim = async (body: unknown) => {
  const r = await ctx.admin.post('/api/sim', body);
  expect(r.status, JSON.stringify(r.body)).toBe(200);
  return r.body;
};
const warnings = (msgs: StreamMessage[], runId: string) => msgs.filter((m): m is Extract<StreamMessage, { type: 'run.warned' }> => m.type === 'run.warned' && m.runId === runId);

describe('runs: start and plan', () => {
  it('refuses a technician who is not the assignee, and a lead', async () => {
    const other = new ApiClient(ctx.srv.url);
    await other.login(demoEmail('tech2'));
    expect((await other.post(`/api/jobs/${ctx.jobId}/runs`, { kind: 'as-found' })).status).toBe(403);
    const lead = new ApiClient(ctx.srv.url);
    await lead.login(demoEmail('lead'));
    expect((await lead.post(`/api/jobs/${ctx.jobId}/runs`, { kind: 'as-found' })).status).toBe(403);
  });
});

describe('capture engine with the autopilot', () => {
  // A test that fails midway leaves its run active on bench-1, and every later test would get 409
  // "Another run is active": abort it through the API, as the technician would (the autopilot follows
  // the run's end and takes its leak away with it).
  afterEach(async () => {
    for (const ws of streams.splice(0)) ws.close();
    for (const id of started.splice(0)) {
      const status = (await getRun(id)).status;
      if (status !== 'running' && status !== 'paused') continue;
      const r = await ctx.tech.post(`/api/runs/${id}/abort`);
      expect(r.status, `abort of run ${id} left by the test: ${JSON.stringify(r.body)}`).toBe(200);
    }
  });

  it('captures every point of an as-found run automatically and computes results', async () => {
    const run = await startRun('as-found');
    // Rooted output: 10, 25, 50, 75, 100 % flow up and back down (common practice).
    expect(run.points.map((p) => p.nominalPct)).toEqual([10, 25, 50, 75, 100, 75, 50, 25, 10]);
    expect(run.holdSeconds).toBe(2);
    expect((await ctx.tech.post(`/api/jobs/${ctx.jobId}/runs`, { kind: 'as-left' })).status).toBe(409);
    await sim({ autopilot: { speed: 20 } });
    await until(async () => (await getRun(run.id)).status === 'complete', 160_000, 'run complete');
    await ctx.srv.runs.settle();
    const done = await getRun(run.id);
    expect(done.points.every((p) => p.state === 'captured')).toBe(true);
    expect(done.points.some((p) => p.flags.includes('manual'))).toBe(false);
    for (const p of done.points) {
      expect(Math.abs(p.capture!.appliedDp - p.targetDp)).toBeLessThan(p.window);
      // The rig's transmitter is ideal: the captured current matches the expected one closely.
      expect(Math.abs(p.capture!.measuredMa - p.expectedMa)).toBeLessThan(0.05);
      expect(p.capture!.endMs - p.capture!.startMs).toBeGreaterThanOrEqual(2000);
    }
    const results = done.results as { points: unknown[]; overallDecision: string };
    expect(results.points).toHaveLength(9);
    expect(results.overallDecision).toBe('pass');
    const trace = await ctx.tech.get(`/api/runs/${run.id}/trace`);
    expect(trace.status).toBe(200);
    const devices = new Set((trace.body.items as { device: string }[]).map((s) => s.device));
    expect(devices).toEqual(new Set(['pressure', 'current']));
  }, 180_000);

  it('warns of a leak at once and does not auto-capture the leaking point', async () => {
    const run = await startRun('as-left');
    const ws = openStream();
    await ws.opened;
    // 0.6 inH2O/min on a 100 inH2O span = 0.6 % span/min, six times the default leak limit, at 75 % flow (index 3).
    await sim({ autopilot: { speed: 20, leak: { perMin: 0.6, points: [3] } } });
    await until(() => warnings(ws.messages, run.id).some((w) => w.kind === 'leak'), 90_000, 'leak warning');
    const leak = warnings(ws.messages, run.id).find((w) => w.kind === 'leak')!;
    expect(leak.index).toBe(3);
    expect(Math.abs(leak.ratePctSpanPerMin!)).toBeGreaterThan(0.3);
    const captured = ws.messages.filter((m) => m.type === 'point.captured' && m.runId === run.id).map((m) => (m as { index: number }).index);
    expect(captured).toEqual([0, 1, 2]);
    // The autopilot dwells at the point for the hold time and more: the engine must not capture it.
    await until(() => (ctx.srv.rig!.snapshot().autopilot?.index ?? 0) > 3, 30_000, 'autopilot moved on');
    const r = await getRun(run.id);
    expect(r.points[3]!.state).not.toBe('captured');
    expect(r.points[3]!.flags).toContain('leak');
    expect(r.currentIndex).toBe(3);
    ws.close();
    expect((await ctx.tech.post(`/api/runs/${run.id}/abort`)).status).toBe(200);
  }, 120_000);

  it('flags an overshoot on the approach and asks for a re-approach from the correct side', async () => {
    // Start from a vented rig with no leak (the test before aborts its run at a leaking point).
    await sim({ autopilot: 'stop', source: { leakPerMin: 0 }, setpoint: { value: 0 } });
    await until(() => Math.abs(ctx.srv.rig!.snapshot().appliedDp) < 0.05, 20_000, 'vented');
    const run = await startRun('as-left');
    const ws = openStream();
    await ws.opened;
    await sim({ autopilot: { speed: 20, overshoot: { fraction: 0.5, points: [1] } } });
    await until(() => warnings(ws.messages, run.id).some((w) => w.kind === 'overshoot'), 60_000, 'overshoot warning');
    const w = warnings(ws.messages, run.id).find((x) => x.kind === 'overshoot')!;
    expect(w.index).toBe(1);
    expect(w.message).toMatch(/approach .* again from below/);
    const r = await getRun(run.id);
    expect(r.points[1]!.flags).toContain('overshoot');
    expect(r.points[1]!.state).not.toBe('captured');
    ws.close();
    expect((await ctx.tech.post(`/api/runs/${run.id}/abort`)).status).toBe(200);
  }, 90_000);

  it('a meter disconnect during the hold invalidates it; the point is captured only after reconnecting', async () => {
    await sim({ autopilot: 'stop', source: { timeConstantS: 0.1 }, setpoint: { value: 0 } });
    await until(() => Math.abs(ctx.srv.rig!.snapshot().appliedDp) < 0.01, 10_000, 'vented');
    const run = await startRun('as-left');
    const ws = openStream();
    await ws.opened;
    const p0 = run.points[0]!;
    await sim({ setpoint: { value: p0.targetDp } });
    const holding = () => ws.messages.some((m) => m.type === 'point.changed' && m.runId === run.id && m.index === 0 && m.state === 'holding');
    await until(holding, 20_000, 'holding');
    await sim({ faults: { current: { unplugged: true } } });
    await until(() => warnings(ws.messages, run.id).some((w) => w.kind === 'disconnect'), 10_000, 'disconnect warning');
    const at = ws.messages.findIndex((m) => m.type === 'run.warned' && m.kind === 'disconnect');
    const after = ws.messages.slice(at).filter((m) => m.type === 'point.changed' && m.runId === run.id && m.index === 0);
    expect(after.length).toBeGreaterThan(0);
    expect(['approaching', 'settling']).toContain((after[0] as { state: string }).state);
    // Held past the hold time (2 s) while unplugged, by the server's own sample times: still not captured.
    const warnedWall = Math.max(...ws.messages.slice(0, at + 1).flatMap((m) => (m.type === 'sample.received' ? [m.wallMs] : [])));
    await until(() => ws.messages.slice(at).some((m) => m.type === 'sample.received' && m.device === 'pressure' && m.wallMs > warnedWall + 2500), 20_000, 'the hold time passed while unplugged');
    expect((await getRun(run.id)).points[0]!.state).not.toBe('captured');
    expect(ws.messages.some((m) => m.type === 'point.captured' && m.runId === run.id)).toBe(false);
    await sim({ faults: { current: { unplugged: false } } });
    await until(() => ws.messages.some((m) => m.type === 'point.captured' && m.runId === run.id && m.index === 0), 20_000, 'captured after reconnect');
    const captured = (await getRun(run.id)).points[0]!.capture!;
    const warnedAt = (ws.messages[at] as { seq: number }).seq;
    expect(captured.startMs).toBeGreaterThan(0);
    expect(warnedAt).toBeGreaterThan(0);
    // Manual capture of the next point needs a reason and is flagged manual.
    expect((await ctx.tech.post(`/api/runs/${run.id}/points/1/capture`, { reason: 'no' })).status).toBe(400);
    ws.close();
    expect((await ctx.tech.post(`/api/runs/${run.id}/abort`)).status).toBe(200);
  }, 90_000);
});
