/**
 * The HART modem as a bench device of the real server (BENCH=sim): GET /api/bench shows it with the
 * transmitter it found, and stopping the server leaves fixed current even when Stillpoint did not
 * set it (the device's "loop current fixed" status bit is enough).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { ApiClient, demoEmail, startTestServer, type TestServer } from '../helpers/test-server';
import { until } from './hart-job-helpers';

let srv: TestServer | undefined;
let admin: ApiClient;

beforeAll(async () => {
  srv = await startTestServer();
  admin = new ApiClient(srv.url);
  await admin.login(demoEmail('admin'));
}, 120_000);

afterAll(async () => {
  await srv?.close();
});

type HartStatus = { connected: boolean; modem: string; baudRate: number; device: { deviceId: number } | null; loopCurrentFixed: boolean; deviceStatus: string[]; lastCommand: { command: number; outcome: string } | null; stats: { transactions: number } };

async function hartStatus(): Promise<HartStatus | undefined> {
  const body = (await admin.get('/api/bench')).body as { benchId: string; benches: { benchId: string; local: { hart?: HartStatus } | null }[] };
  return body.benches.find((b) => b.benchId === body.benchId)?.local?.hart;
}

describe('HART modem on the bench', () => {
  it('is listed with its port settings, the transmitter found by command 0 and its counters', async () => {
    const hart = await until(hartStatus, (h) => !!h?.device && (h?.stats.transactions ?? 0) >= 2, 'the HART device to be found', 10_000);
    expect(hart).toMatchObject({ connected: true, modem: 'usb', baudRate: 1200, device: { deviceId: 0x00b2c7 }, loopCurrentFixed: false, lastCommand: { outcome: 'ok' } });
  });

  it('takes the HART device’s configuration, trims and faults through POST /api/sim, and refuses what it cannot hold', async () => {
    const ok = await admin.post('/api/sim', { hart: { tag: 'pt-7', writeProtect: true }, transmitter: { daErrorAt4Ma: 0.05, dampingS: 0.2 }, faults: { hart: { checksumErrors: 0.25 } } });
    expect(ok.status).toBe(200);
    expect(ok.body.hart).toMatchObject({ config: { tag: 'pt-7', writeProtect: true }, faults: { checksumErrors: 0.25 }, trim: { fixedMa: null } });
    const bad = await admin.post('/api/sim', { hart: { tag: 'MUCH-TOO-LONG', unitCode: 200 } });
    expect(bad.status).toBe(400);
    expect(Object.keys(bad.body.error.fields ?? {}).sort()).toEqual(['hart.tag', 'hart.unitCode']);
    expect((await admin.post('/api/sim', { hart: { writeProtect: false }, transmitter: { daErrorAt4Ma: 0, dampingS: 0 }, faults: { hart: { checksumErrors: 0 } } })).status).toBe(200);
  });

  it('leaves fixed current when the server stops, also when the device reports it fixed by someone else', async () => {
    const rig = srv!.rig!;
    rig.apply({ trim: { fixedMa: 12 } }); // as if a handheld had fixed the loop
    await until(hartStatus, (h) => h?.loopCurrentFixed === true, 'the driver to see "loop current fixed"', 10_000);
    expect((await hartStatus())?.deviceStatus).toContain('loop current fixed');
    await srv!.close();
    srv = undefined;
    expect(rig.snapshot().hart.trim.fixedMa).toBeNull();
  });
});
