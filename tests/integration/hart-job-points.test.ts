/**
 * Every captured point keeps the HART device's digital PV and loop current beside the meter's mA,
 * with the digital and analog (D/A) errors (real server, BENCH=sim, HART_IN_JOB=on, PGlite through
 * the migrations, autopilot). The simulated output stage reads 0.05 mA high at 4 and 20 mA while
 * the sensor is right: the D/A error shows about +0.05 mA and the digital error about 0.
 */
import { describe, expect, it } from 'vitest';
import type { Run } from '../../shared/schemas/runs';
import { useHartJob } from './hart-job-helpers';

const ctx = useHartJob('PTW-HART-2');
describe('HART values per captured point', () => {
  it('stores the digital PV and the device loop current with the digital and D/A errors', async () => {
    // The device agrees with the register (square root in the transmitter), with a D/A error.
    expect((await ctx.admin.post('/api/sim', { transmitter: { outputMode: 'sqrt-transmitter', daErrorAt4Ma: 0.05, daErrorAt20Ma: 0.05 } })).status).toBe(200);
    const start = await ctx.tech.post(`/api/jobs/${ctx.jobId}/runs`, { kind: 'mode-check' });
    expect(start.status).toBe(201);
    const runId = (start.body as Run).id;
    expect((await ctx.admin.post('/api/sim', { autopilot: { speed: 4, keepTransmitter: true } })).status).toBe(200);
    let run: Run | undefined;
    const end = performance.now() + 60_000;
    while (performance.now() < end) {
      run = (await ctx.tech.get(`/api/runs/${runId}`)).body as Run;
      if (run.status === 'complete') break;
      await new Promise((r) => setTimeout(r, 150));
    }
    expect(run?.status).toBe('complete');
    const c = run!.points[0]!.capture!;
    expect(c.hart).toBeTruthy();
    const h = c.hart!;
    expect(h.n).toBeGreaterThanOrEqual(1);
    // The device reports the current it commands; the meter reads it 0.05 mA high.
    expect(h.analogErrorMa).toBeGreaterThan(0.04);
    expect(h.analogErrorMa).toBeLessThan(0.06);
    expect(h.analogErrorPctSpan).toBeCloseTo((h.analogErrorMa / 16) * 100, 9);
    expect(Math.abs(h.digitalErrorPctSpan)).toBeLessThan(0.3);
    expect(Math.abs(h.pv - c.appliedDp)).toBeLessThan(0.3);
  }, 90_000);
});
