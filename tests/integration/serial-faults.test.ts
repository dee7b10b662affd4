/**
 * Fault tests over the real SerialPortStream and the simulator binding: repeated cable pulls,
 * opening an absent device, and random line noise between valid lines.
 */
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { SIMCAL_FEED_PROFILE } from '../../shared/protocol';
import { openPort, type DeviceConnectedEvent, type OpenFailedEvent } from '../../server/bench/transport';
import { LineCalibratorDriver, ScpiMeterDriver } from '../../server/bench/protocols';
import { SimRig } from '../../simulators/sim-rig';

const sleep = (ms: number): Promise<void> => new Promise((r) => setTimeout(r, ms));

function once<T>(subscribe: (listener: (value: T) => void) => () => void): Promise<T> {
  return new Promise((resolve) => {
    const off = subscribe((value) => {
      off();
      resolve(value);
    });
  });
}

describe('serial faults', () => {
  it('survives 100 unplug/replug cycles, each reconnect within 2 s, while polling', async () => {
    const rig = new SimRig({ latencyMs: 1, source: { timeConstantS: 0.05 } });
    const port = openPort({ path: rig.paths.current, binding: rig.binding });
    await port.open();
    const meter = new ScpiMeterDriver(port, { pollRateHz: 20, timeoutMs: 500 });
    await meter.configure();
    let received = 0;
    meter.on('sample.received', () => (received += 1));
    meter.startPolling();

    const reconnects: number[] = [];
    for (let cycle = 0; cycle < 100; cycle += 1) {
      const down = once<unknown>((l) => {
        port.on('device.disconnected', l);
        return () => port.off('device.disconnected', l);
      });
      const up = once<DeviceConnectedEvent>((l) => {
        port.on('device.connected', l);
        return () => port.off('device.connected', l);
      });
      const before = received;
      rig.apply({ faults: { current: { unplugged: true } } });
      await down;
      // Cable out for 0, 60 or 120 ms: some reconnects need a second or third attempt.
      await sleep((cycle % 3) * 60);
      rig.apply({ faults: { current: { unplugged: false } } });
      const event = await up;
      reconnects.push(event.downtimeMs ?? Number.POSITIVE_INFINITY);
      // Readings resume after the reconnect (the driver re-configures the meter first).
      while (received === before) await sleep(5);
    }
    meter.stopPolling();
    expect(reconnects).toHaveLength(100);
    expect(Math.max(...reconnects)).toBeLessThan(2000);
    expect(rig.meter.measuring).toBe('curr');
    await expect(meter.read()).resolves.toMatchObject({ unit: 'mA' });
    meter.close();
    await port.close();
    rig.dispose();
  }, 60_000);

  it('retries an absent device with capped exponential backoff (100 ms doubling to 1 s), then connects', async () => {
    const rig = new SimRig();
    rig.apply({ faults: { pressure: { unplugged: true } } });
    const port = openPort({ path: rig.paths.pressure, binding: rig.binding });
    const failures: OpenFailedEvent[] = [];
    port.on('open.failed', (e) => failures.push(e));
    await sleep(2900);
    // Attempts at about 0, 100, 300, 700, 1500 and 2500 ms.
    expect(failures.slice(0, 5).map((f) => f.retryInMs)).toEqual([100, 200, 400, 800, 1000]);
    expect(failures[0]?.error).toMatch(/No such file or directory/);
    rig.apply({ faults: { pressure: { unplugged: false } } });
    await port.open();
    expect(port.connected).toBe(true);
    await port.close();
    expect(port.state).toBe('closed');
    rig.dispose();
  });

  it('fuzz: noise bursts between valid free-running lines keep every valid line, in order, through the real stream', async () => {
    await fc.assert(
      fc.asyncProperty(
        fc.array(
          fc.oneof(
            fc.integer({ min: -99_999, max: 9_999_999 }).map((n) => ({ kind: 'valid' as const, value: n / 1000 })),
            fc.uint8Array({ minLength: 1, maxLength: 300 }).map((data) => ({ kind: 'noise' as const, data })),
          ),
          { minLength: 1, maxLength: 25 },
        ),
        async (items) => {
          const rig = new SimRig({ latencyMs: 1 });
          const port = openPort({ path: rig.paths.pressure, binding: rig.binding });
          await port.open();
          // Free-running profile, fed by hand: the emulator's own feed stays off.
          const driver = new LineCalibratorDriver(port, SIMCAL_FEED_PROFILE);
          const seen: string[] = [];
          driver.on('sample.received', (s) => seen.push(s.raw));
          // The first line only synchronises the framer (a free-running port may open mid-line).
          rig.calibrator.injectBytes('sync\r\n');
          const expected: string[] = [];
          for (const item of items) {
            if (item.kind === 'valid') {
              const line = `DP ${item.value < 0 ? '-' : '+'}${Math.abs(item.value).toFixed(5)} inH2O@68F`;
              expected.push(line);
              rig.calibrator.injectBytes(`${line}\r\n`);
            } else {
              rig.calibrator.injectBytes(item.data);
              rig.calibrator.injectBytes('\r\n');
            }
          }
          rig.calibrator.injectBytes('DP +0.00000 inH2O@68F\r\n');
          const deadline = Date.now() + 2000;
          while (seen.at(-1) !== 'DP +0.00000 inH2O@68F' && Date.now() < deadline) await sleep(2);
          let j = 0;
          for (const raw of seen) if (j < expected.length && raw === expected[j]) j += 1;
          driver.close();
          await port.close();
          rig.dispose();
          expect(j).toBe(expected.length);
        },
      ),
      { numRuns: 60 },
    );
  });
});
