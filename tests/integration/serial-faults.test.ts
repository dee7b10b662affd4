/**
 * Fault tests over the real SerialPortStream and the simulator binding: repeated cable pulls,
 * opening an absent device, and random line noise between valid lines. The reconnect tests run on
 * vitest's fake clock (timers, Date and performance.now, which the rig model reads), so a reconnect
 * time is the port's backoff, not how busy the machine is, and nothing waits on the wall clock.
 */
import { afterEach, describe, expect, it, vi } from 'vitest';
import fc from 'fast-check';
import { SIMCAL_FEED_PROFILE } from '../../shared/protocol';
import { openPort, type DeviceConnectedEvent, type OpenFailedEvent } from '../../server/bench/transport';
import { LineCalibratorDriver, ScpiMeterDriver } from '../../server/bench/protocols';
import { SimRig } from '../../simulators/sim-rig';

const sleep = (ms: number): Promise<void> => new Promise((r) => setTimeout(r, ms));

/** Fake timers, Date and performance.now; stream internals (nextTick, setImmediate) stay real. */
const fakeClock = () => vi.useFakeTimers({ toFake: ['setTimeout', 'clearTimeout', 'setInterval', 'clearInterval', 'Date', 'performance'] });

/** Moves the fake clock on in 5 ms steps until `done()` holds; fails after `limitMs` of fake time. */
async function advanceUntil(done: () => boolean, limitMs: number, what: string): Promise<void> {
  const end = Date.now() + limitMs;
  while (!done()) {
    if (Date.now() > end) throw new Error(`${what}: not within ${limitMs} ms of the fake clock`);
    await vi.advanceTimersByTimeAsync(5);
  }
}

afterEach(() => {
  vi.useRealTimers();
});

describe('serial faults', () => {
  it('survives 100 unplug/replug cycles, each reconnect within 2 s, while polling', async () => {
    fakeClock();
    const rig = new SimRig({ latencyMs: 1, source: { timeConstantS: 0.05 } });
    const port = openPort({ path: rig.paths.current, binding: rig.binding });
    const opened = port.open();
    await advanceUntil(() => port.connected, 1000, 'first open');
    await opened;
    const meter = new ScpiMeterDriver(port, { pollRateHz: 20, timeoutMs: 500 });
    const configured = meter.configure();
    await advanceUntil(() => rig.meter.measuring === 'curr', 1000, 'meter configured');
    await configured;
    let received = 0;
    meter.on('sample.received', () => (received += 1));
    meter.startPolling();

    const reconnects: number[] = [];
    let down = 0;
    port.on('device.disconnected', () => (down += 1));
    port.on('device.connected', (e: DeviceConnectedEvent) => reconnects.push(e.downtimeMs ?? Number.POSITIVE_INFINITY));
    for (let cycle = 0; cycle < 100; cycle += 1) {
      const before = received;
      rig.apply({ faults: { current: { unplugged: true } } });
      await advanceUntil(() => down === cycle + 1, 1000, `cycle ${cycle}: disconnect seen`);
      // Cable out for 0, 60 or 120 ms: some reconnects need a second or third attempt.
      await vi.advanceTimersByTimeAsync((cycle % 3) * 60);
      rig.apply({ faults: { current: { unplugged: false } } });
      await advanceUntil(() => reconnects.length === cycle + 1, 5000, `cycle ${cycle}: reconnect`);
      // Readings resume after the reconnect (the driver re-configures the meter first).
      await advanceUntil(() => received > before, 5000, `cycle ${cycle}: readings resume`);
    }
    meter.stopPolling();
    expect(reconnects).toHaveLength(100);
    expect(Math.max(...reconnects)).toBeLessThan(2000);
    expect(rig.meter.measuring).toBe('curr');
    const read = meter.read();
    await vi.advanceTimersByTimeAsync(100);
    await expect(read).resolves.toMatchObject({ unit: 'mA' });
    meter.close();
    await port.close();
    rig.dispose();
  });

  it('retries an absent device with capped exponential backoff (100 ms doubling to 1 s), then connects', async () => {
    fakeClock();
    const rig = new SimRig();
    rig.apply({ faults: { pressure: { unplugged: true } } });
    const t0 = Date.now();
    const port = openPort({ path: rig.paths.pressure, binding: rig.binding });
    const failures: (OpenFailedEvent & { atMs: number })[] = [];
    port.on('open.failed', (e) => failures.push({ ...e, atMs: Date.now() - t0 }));
    const opened = port.open();
    await vi.advanceTimersByTimeAsync(2900);
    // Attempts at 0, 100, 300, 700, 1500 and 2500 ms.
    expect(failures.map((f) => f.atMs)).toEqual([0, 100, 300, 700, 1500, 2500]);
    expect(failures.slice(0, 5).map((f) => f.retryInMs)).toEqual([100, 200, 400, 800, 1000]);
    expect(failures[0]?.error).toMatch(/No such file or directory/);
    rig.apply({ faults: { pressure: { unplugged: false } } });
    await advanceUntil(() => port.connected, 1000, 'connects once plugged in');
    await opened;
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
