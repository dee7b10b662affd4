/**
 * A HART modem lost in the middle of the hands-free output trim (real server, BENCH=sim,
 * HART_IN_JOB=on): the trim ends at once, saying why; the device, cut off, stays fixed; once the
 * modem is back the driver leaves fixed current by itself (the simulator's own state is checked).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { JobHart } from '../../shared/schemas/hart-job';
import { readyForRun } from '../helpers/e2e';
import { ApiClient, demoEmail, startTestServer, type TestServer } from '../helpers/test-server';

let srv: TestServer;
let tech: ApiClient;
let admin: ApiClient;
let jobId: string;

beforeAll(async () => {
  srv = await startTestServer({ env: { HART_IN_JOB: 'on', HOLD_SECONDS: '2' } });
  tech = new ApiClient(srv.url);
  await tech.login(demoEmail('tech'));
  admin = new ApiClient(srv.url);
  await admin.login(demoEmail('admin'));
  jobId = await readyForRun(tech, 'PTW-HART-5');
}, 120_000);

afterAll(async () => {
  await srv?.close();
});

async function until<T>(read: () => T | Promise<T>, ok: (v: T) => boolean, what: string, timeoutMs = 30_000): Promise<T> {
  const end = performance.now() + timeoutMs;
  for (;;) {
    const v = await read();
    if (ok(v)) return v;
    if (performance.now() > end) throw new Error(`timed out waiting for ${what}: ${JSON.stringify(v)}`);
    await new Promise((r) => setTimeout(r, 100));
  }
}

const hart = async () => (await tech.get(`/api/jobs/${jobId}/hart`)).body as JobHart;

describe('HART output trim and a lost modem', () => {
  it('ends the trim and leaves fixed current once the modem is back', async () => {
    expect((await tech.post(`/api/jobs/${jobId}/hart/output-trim`, { loopInManual: true, operatorsInformed: true })).status).toBe(202);
    await until(hart, (h) => h.trims.at(-1)?.status === 'running' && h.trims.at(-1)?.fixedMa != null, 'the loop to be fixed');
    const rig = srv.rig!;
    expect(rig.snapshot().hart.trim.fixedMa).toBe(4);
    expect((await admin.post('/api/sim', { faults: { hart: { unplugged: true } } })).status).toBe(200);
    const ended = await until(hart, (h) => h.trims.at(-1)?.status !== 'running', 'the trim to end');
    const t = ended.trims.at(-1)!;
    expect(t.status).toBe('aborted');
    expect(t.error).toMatch(/disconnected/);
    // Cut off, the device keeps its fixed current; Stillpoint still counts the loop as fixed.
    expect(rig.snapshot().hart.trim.fixedMa).toBe(4);
    expect(ended.loopCurrentFixed).toBe(true);
    expect((await admin.post('/api/sim', { faults: { hart: { unplugged: false } } })).status).toBe(200);
    await until(() => rig.snapshot().hart.trim.fixedMa, (v) => v === null, 'the device to leave fixed current after the reconnect');
    await until(hart, (h) => !h.loopCurrentFixed, 'the job to show the loop free');
  }, 90_000);
});
