/**
 * The simulated rig's autopilot follows the run (issue 13, item 11): started mid-run it begins at
 * the run's current point, not at point 1; a redo sends it back to that point; its counter never
 * passes the plan's end. Booted app, simulated rig, HOLD_SECONDS = 2.
 */
import { describe, expect, it } from 'vitest';
import { RunSchema, type Run } from '../../shared/schemas/runs';
import { until, useRunJob } from './runs-helpers';

const ctx = useRunJob();

const getRun = async (id: string): Promise<Run> => RunSchema.parse((await ctx.tech.get(`/api/runs/${id}`)).body);
const sim = async (body: unknown) => {
  const r = await ctx.admin.post('/api/sim', body);
  expect(r.status, JSON.stringify(r.body)).toBe(200);
  return r.body as Snapshot;
};
type Snapshot = { autopilot?: { index: number; phase: string; points: number } | null };
const snapshot = async (): Promise<Snapshot> => (await ctx.admin.get('/api/sim')).body as Snapshot;

describe('the autopilot follows the run', () => {
  it("starts at the run's current point, goes back for a redo, and never counts past the end", async () => {
    const started = await ctx.tech.post(`/api/jobs/${ctx.jobId}/runs`, { kind: 'as-found' });
    expect(started.status, JSON.stringify(started.body)).toBe(201);
    const run = RunSchema.parse(started.body);
    await sim({ autopilot: { speed: 20 } });
    await until(async () => ((await getRun(run.id)).currentIndex ?? 0) >= 3, 90_000, 'three points captured');
    await sim({ autopilot: 'stop' });

    // Started again mid-run: at the run's current point, not point 1.
    const current = (await getRun(run.id)).currentIndex!;
    expect(current).toBeGreaterThanOrEqual(3);
    const restarted = await sim({ autopilot: { speed: 20 } });
    expect(restarted.autopilot?.index).toBe(current);

    // A redo of point 2 moves the run back there; the autopilot follows and captures it again.
    const redo = await ctx.tech.post(`/api/runs/${run.id}/points/1/redo`, { reason: 'checking the approach' });
    expect(redo.status, JSON.stringify(redo.body)).toBe(200);
    await until(async () => (await snapshot()).autopilot?.index === 1, 10_000, 'autopilot at the redone point');
    await until(async () => (await getRun(run.id)).points[1]!.capture !== null, 60_000, 'point 2 captured again');

    // To the end: the counter stops at the last point.
    await until(async () => (await getRun(run.id)).status === 'complete', 180_000, 'run complete');
    const end = await snapshot();
    expect(end.autopilot?.phase).toBe('done');
    expect(end.autopilot!.index).toBeLessThan(end.autopilot!.points);
  }, 360_000);
});
