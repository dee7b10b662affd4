import { describe, expect, it } from 'vitest';
import { defineHartSuite, HART_LINE, HART_SUITE_RIG } from './hart-driver-suite';
import { SimRig } from '../../simulators/sim-rig';
import { openPort } from '../../server/bench/transport';
import { HartMasterDriver, HartTimeoutError } from '../../server/bench/protocols';

defineHartSuite('HART driver over the simulator binding', async () => {
  const rig = new SimRig(HART_SUITE_RIG);
  return { rig, binding: rig.binding, path: rig.paths.hart, teardown: async () => rig.dispose() };
}, true);

describe('HART driver with an RS-232 modem keyed by RTS (simulator binding)', () => {
  it('is heard only while it keys RTS', async () => {
    const rig = new SimRig(HART_SUITE_RIG);
    rig.hart.needsRts = true;
    const port = openPort({ path: rig.paths.hart, binding: rig.binding, ...HART_LINE });
    await port.open();
    const usb = new HartMasterDriver(port, { modem: 'usb', timeoutMs: 500, retries: 0 });
    await expect(usb.identify()).rejects.toBeInstanceOf(HartTimeoutError);
    await usb.close();
    const rts = new HartMasterDriver(port, { modem: 'rts', timeoutMs: 500, retries: 0 });
    await expect(rts.identify()).resolves.toMatchObject({ deviceId: 0x00b2c7 });
    await expect(rts.readPrimaryVariable()).resolves.toMatchObject({ value: { unitCode: 1 } });
    expect(rts.modem).toBe('rts');
    await rts.close();
    await port.close();
    rig.dispose();
  });
});
