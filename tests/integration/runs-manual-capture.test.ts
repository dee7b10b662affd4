/**
 * Manual capture on the booted app with the simulated rig. The hold time here is an hour
 * (HOLD_SECONDS = 3600), so the point stays in its hold until the technician captures it by hand:
 * with the 2 s hold of the other capture suites, a loaded machine let the hands-free capture finish
 * the one-point run between the test seeing "holding" and its manual capture (409 "The run is
 * complete").
 */
import { describe, expect, it } from 'vitest';
import { RunSchema, type Run } from '../../shared/schemas/runs';
import { until, useRunJob } from './runs-helpers';

const ctx = useRunJob(3600);

const getRun = async (id: string): Promise<Run> => RunSchema.parse((await ctx.tech.get(`/api/runs/${id}`)).body);
const sim = async (body: unknown) => {
  const r = await ctx.admin.post('/api/sim', body);
  expect(r.status, JSON.stringify(r.body)).toBe(200);
  return r.body;
};

describe('manual capture', () => {
  it('manual capture takes the hold means with the manual flag and is audited; redo clears it', async () => {
    await sim({
      autopilot: 'stop',
      source: { timeConstantS: 0.1 },
      setpoint: { value: 0 },
      transmitter: { lrv: 0, urv: 100, outputMode: 'sqrt-transmitter', cutoff: { mode: 'clamp', flowPct: 6 } },
    });
    await until(() => Math.abs(ctx.srv.rig!.snapshot().appliedDp) < 0.01, 10_000, 'vented');
    const r = await ctx.tech.post(`/api/jobs/${ctx.jobId}/runs`, { kind: 'mode-check' });
    expect(r.status, JSON.stringify(r.body)).toBe(201);
    const run = RunSchema.parse(r.body);
    expect(run.points).toHaveLength(1);
    expect(run.points[0]!.dpPct).toBe(25);
    const r0 = await ctx.tech.post(`/api/runs/${run.id}/points/0/capture`, { reason: 'pressure not applied yet' });
    expect(r0.status).toBe(409);
    await sim({ setpoint: { value: run.points[0]!.targetDp } });
    await until(async () => (await getRun(run.id)).points[0]!.state === 'holding', 10_000, 'holding');
    const r1 = await ctx.tech.post(`/api/runs/${run.id}/points/0/capture`, { reason: 'technician judged the reading steady' });
    expect(r1.status, JSON.stringify(r1.body)).toBe(200);
    const after = RunSchema.parse(r1.body);
    expect(after.points[0]!.flags).toContain('manual');
    expect(after.points[0]!.capture!.manualReason).toBe('technician judged the reading steady');
    // 25 % DP on a rooted output reads about 12 mA (common practice).
    expect(after.modeCheck).toMatchObject({ finding: 'root-in-transmitter', matchesRegister: true });
    const audit = await ctx.admin.get(`/api/audit?entity=run&entityId=${run.id}`);
    expect((audit.body.items as { action: string }[]).map((a) => a.action)).toContain('run.point-captured-manually');
    const redo = await ctx.tech.post(`/api/runs/${run.id}/points/0/redo`);
    expect(redo.status, JSON.stringify(redo.body)).toBe(200);
    expect(RunSchema.parse(redo.body).points[0]!.capture).toBeNull();
    expect((await ctx.tech.post(`/api/runs/${run.id}/abort`)).status).toBe(200);
  }, 60_000);
});
