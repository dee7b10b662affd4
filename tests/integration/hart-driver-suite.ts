/**
 * The HART master driver suite, run over the simulator's serialport binding and over socat
 * pseudo-terminals at 1200 bit/s 8O1. Nothing is mocked: the real port, the frame decoder, the
 * transaction queue and timeouts run against the simulated transmitter, whose loop current is the
 * one the rig's meter reads.
 */
import { afterAll, afterEach, beforeAll, describe, expect, it } from 'vitest';
import { describeDeviceStatus } from '../../shared/protocol/hart';
import { openPort, type BindingInterface, type ManagedPort } from '../../server/bench/transport';
import { HartBusyError, HartChecksumError, HartMasterDriver, HartTimeoutError, HartWriteProtectedError, type HartDriverOptions, type HartTransaction } from '../../server/bench/protocols';
import { HART_LINE_SETTINGS } from '../../server/bench/hart-modem';
import { NO_HART_FAULTS } from '../../simulators/hart-transmitter-emulator';
import type { SimRig } from '../../simulators/sim-rig';

/** What a run needs: the rig, a binding that reaches its HART device, and the path to open. */
export interface HartSuiteEnv {
  rig: SimRig;
  binding: BindingInterface;
  path: string;
  teardown(): Promise<void>;
}

/** Rig settings of both runs: a fast pump so the PV settles in tens of milliseconds. */
export const HART_SUITE_RIG = { source: { timeConstantS: 0.02, isolateBand: 0.001 }, transmitter: { lrv: 0, urv: 100 }, latencyMs: 2 } as const;

const { baudRate, ...lineSettings } = HART_LINE_SETTINGS;
/** The bench's HART line settings (1200 bit/s 8O1) as `openPort` takes them. */
export const HART_LINE = { baudRate, lineSettings };

/** Timeouts short enough for the fault tests, with room for a loaded machine above the simulated device's ~0.35 s answer. */
const FAST: HartDriverOptions = { timeoutMs: 1000, retries: 2, busyRetries: 2, busyDelayMs: 20 };

const sleep = (ms: number): Promise<void> => new Promise((r) => setTimeout(r, ms));

async function until(check: () => boolean, what: string, timeoutMs = 5000): Promise<void> {
  const end = performance.now() + timeoutMs;
  while (!check()) {
    if (performance.now() > end) throw new Error(`timed out waiting for ${what}`);
    await sleep(25);
  }
}

/** `canUnplug`: the binding can pull the cable (the simulator's can; a pty cannot); the disconnect test is defined only then. */
export function defineHartSuite(name: string, setup: () => Promise<HartSuiteEnv>, canUnplug: boolean): void {
  describe(name, () => {
    let env: HartSuiteEnv;
    let port: ManagedPort;
    const drivers: HartMasterDriver[] = [];

    beforeAll(async () => {
      env = await setup();
      port = openPort({ path: env.path, binding: env.binding, ...HART_LINE });
      await port.open();
    });

    afterEach(async () => {
      env.rig.hart.faults = { ...NO_HART_FAULTS };
      env.rig.apply({ hart: { writeProtect: false }, transmitter: { zeroErrorPct: 0, daErrorAt4Ma: 0, daErrorAt20Ma: 0 }, trim: { sensorZero: 0, loopAt4Ma: 0, loopAt20Ma: 0 } });
      env.rig.hart.state.configChanged = false;
      for (const d of drivers.splice(0)) await d.close();
      // Every test leaves the loop measuring: no test may hide a stuck fixed current behind the next.
      expect(env.rig.snapshot().hart.trim.fixedMa).toBeNull();
    });

    afterAll(async () => {
      await port?.close();
      await env?.teardown();
    });

    const driver = (options: HartDriverOptions = {}): HartMasterDriver => {
      const d = new HartMasterDriver(port, { ...FAST, ...options });
      drivers.push(d);
      return d;
    };
    const settle = async (dp: number): Promise<void> => {
      env.rig.apply({ setpoint: { value: dp } });
      await sleep(150);
    };

    it('identifies the device at polling address 0, then talks to it by its long address', async () => {
      const d = driver();
      const seen: HartTransaction[] = [];
      d.on('transaction.completed', (t) => seen.push(t));
      const identity = await d.identify();
      expect(identity).toMatchObject({ expandedDeviceType: 0x3a51, deviceId: 0x00b2c7, universalRevision: 7 });
      const tag = await d.readTagDescriptorDate();
      expect(tag.value).toEqual({ tag: 'FT-101', descriptor: 'SIM DP FLOW', date: { year: 2026, month: 11, day: 2 } });
      // Command 0 went out as a short frame (delimiter 02, address 80: primary master, polling address 0); the next as a long one.
      expect(seen[0]?.request).toBe('FF FF FF FF FF 02 80 00 00 82');
      expect(seen[1]?.request).toMatch(/^FF FF FF FF FF 82 BA 51 00 B2 C7 0D 00 [0-9A-F]{2}$/);
      expect(seen[1]?.reply).toMatch(/^FF FF FF FF FF 86 BA 51 00 B2 C7 0D 17 00 /);
      const info = await d.readDeviceInformation();
      expect(info.value).toMatchObject({ transferFunction: 0, rangeUnitCode: 1, urv: 100, lrv: 0, writeProtect: 0 });
    });

    it('reads the PV, the loop current and the dynamic variables from the same transmitter the meter reads', async () => {
      await settle(25);
      const d = driver();
      const pv = await d.readPrimaryVariable();
      expect(pv.value.unitCode).toBe(1);
      expect(pv.value.value).toBeCloseTo(25, 2);
      const loop = await d.readLoopCurrent();
      // 25 % of a linear 0–100 range: 4 + 16·0.25 = 8 mA (practice, REFERENCE.md check value).
      expect(loop.value.currentMa).toBeCloseTo(8, 3);
      expect(loop.value.percentOfRange).toBeCloseTo(25, 2);
      expect(env.rig.readLoopCurrent()).toBeCloseTo(8, 3);
      const dyn = await d.readDynamicVariables();
      expect(dyn.value.currentMa).toBeCloseTo(8, 3);
      expect(dyn.value.variables[0]?.value).toBeCloseTo(25, 2);
    });

    it('queues commands one at a time, first in first out', async () => {
      const d = driver();
      await d.identify();
      const order: number[] = [];
      await Promise.all([d.readPrimaryVariable(), d.readLoopCurrent(), d.readDynamicVariables()].map((p, i) => p.then(() => order.push(i))));
      expect(order).toEqual([0, 1, 2]);
      expect(d.stats).toMatchObject({ sent: 4, replied: 4, retries: 0, transactions: 4, errors: 0 });
    });

    it('enters fixed current, which moves the loop the meter reads, and leaves it', async () => {
      await settle(25);
      const d = driver();
      expect(await d.enterFixedCurrent(12)).toBeCloseTo(12, 5);
      expect(env.rig.readLoopCurrent()).toBeCloseTo(12, 4);
      const fixed = await d.readLoopCurrent();
      expect(describeDeviceStatus(fixed.deviceStatus)).toContain('loop current fixed');
      expect(d.loopCurrentFixed).toBe(true);
      await d.leaveFixedCurrent();
      expect(env.rig.snapshot().hart.trim.fixedMa).toBeNull();
      expect(env.rig.readLoopCurrent()).toBeCloseTo(8, 3);
      expect(d.loopCurrentFixed).toBe(false);
    });

    it('trims a 0.05 mA D/A error out with commands 45 and 46, hands-free, and leaves fixed current', async () => {
      env.rig.apply({ transmitter: { daErrorAt4Ma: 0.05, daErrorAt20Ma: 0.05 } });
      const d = driver();
      await d.withFixedCurrent(4, async () => {
        const measured = env.rig.readLoopCurrent();
        expect(measured).toBeCloseTo(4.05, 4);
        await d.trimLoopZero(measured);
        await d.enterFixedCurrent(20);
        await d.trimLoopGain(env.rig.readLoopCurrent());
        for (const level of [4, 12, 20]) {
          await d.enterFixedCurrent(level);
          expect(Math.abs(env.rig.readLoopCurrent() - level)).toBeLessThan(0.002);
        }
      });
      expect(env.rig.snapshot().hart.trim.fixedMa).toBeNull();
      expect(describeDeviceStatus(d.deviceStatus ?? 0)).toContain('configuration changed');
      await d.resetConfigurationChanged();
      expect(describeDeviceStatus(d.deviceStatus ?? 0)).not.toContain('configuration changed');
    });

    it('zero-trims a sensor zero error with command 43', async () => {
      env.rig.apply({ transmitter: { zeroErrorPct: 0.5 } });
      await settle(0);
      const d = driver();
      expect((await d.readPrimaryVariable()).value.value).toBeCloseTo(0.5, 2);
      await d.setPvZero();
      expect((await d.readPrimaryVariable()).value.value).toBeCloseTo(0, 3);
      env.rig.apply({ transmitter: { zeroErrorPct: 0 } });
      expect((await d.readPrimaryVariable()).value.value).toBeCloseTo(-0.5, 2);
    });

    it('times out with the command, the port and the attempts named, and never leaves the loop fixed', async () => {
      const d = driver();
      await d.enterFixedCurrent(4);
      env.rig.hart.faults = { ...NO_HART_FAULTS, noAnswer: 1 };
      const cleanup: Error[] = [];
      d.on('cleanup.failed', (e) => cleanup.push(e));
      const error = await d.withFixedCurrent(4, () => d.trimLoopZero(4)).catch((e: unknown) => e);
      expect(error).toBeInstanceOf(HartTimeoutError);
      expect((error as Error).message).toBe(`HART command 40 (enter/exit fixed current mode) on ${env.path}: no reply in 1000 ms (3 attempts)`);
      // The exit could not get through either; the loop is still fixed and the driver knows it.
      expect(cleanup[0]).toBeInstanceOf(HartTimeoutError);
      expect(d.loopCurrentFixed).toBe(true);
      expect(env.rig.snapshot().hart.trim.fixedMa).toBe(4);
      env.rig.hart.faults = { ...NO_HART_FAULTS };
      await d.close(); // closing always tries to leave fixed current
      expect(env.rig.snapshot().hart.trim.fixedMa).toBeNull();
      expect(d.stats.timeouts).toBeGreaterThanOrEqual(6);
    });

    it('retries damaged replies and then reports a checksum error', async () => {
      const d = driver();
      await d.identify();
      env.rig.hart.faults = { ...NO_HART_FAULTS, checksumErrors: 1 };
      const error = await d.readPrimaryVariable().catch((e: unknown) => e);
      expect(error).toBeInstanceOf(HartChecksumError);
      expect((error as Error).message).toMatch(/command 1 \(read primary variable\) on .*: the reply failed its checksum on every attempt \(3\)/);
      expect(d.stats.checksumErrors).toBe(3);
      // One damaged reply, then good ones: the retry brings the reading.
      env.rig.hart.faults = { ...NO_HART_FAULTS, checksumErrors: 1 };
      const reading = d.readPrimaryVariable();
      await until(() => d.stats.checksumErrors === 4, 'the first damaged reply');
      env.rig.hart.faults = { ...NO_HART_FAULTS };
      await expect(reading).resolves.toMatchObject({ value: { unitCode: 1 } });
      expect(d.lastTransaction).toMatchObject({ outcome: 'ok', attempts: 2 });
    });

    it('re-asks a busy device, then says it is busy', async () => {
      const d = driver();
      await d.identify();
      env.rig.hart.faults = { ...NO_HART_FAULTS, busy: true };
      const error = await d.readDynamicVariables().catch((e: unknown) => e);
      expect(error).toBeInstanceOf(HartBusyError);
      expect((error as HartBusyError).code).toBe('hart-busy');
      expect((error as Error).message).toContain('the device answered "busy" (response code 32)');
      expect(d.stats.busy).toBe(3);
    });

    it('refuses writes while write protected, with the reason in words', async () => {
      env.rig.apply({ hart: { writeProtect: true } });
      const d = driver();
      expect((await d.readDeviceInformation()).value.writeProtect).toBe(1);
      const error = await d.setPvZero().catch((e: unknown) => e);
      expect(error).toBeInstanceOf(HartWriteProtectedError);
      expect((error as Error).message).toContain('"in write protect mode" (response code 7)');
      expect(d.lastTransaction).toMatchObject({ command: 43, writes: true, outcome: 'error', responseCode: 7, error: { code: 'hart-write-protected' } });
    });

    it('reports the configuration changed flag in words and reads through garbage on the line', async () => {
      const d = driver();
      env.rig.apply({ faults: { hart: { configChanged: true, garbage: true } } });
      const pv = await d.readPrimaryVariable();
      expect(describeDeviceStatus(pv.deviceStatus)).toContain('configuration changed');
      for (let i = 0; i < 3; i += 1) await d.readPrimaryVariable();
      expect(d.stats.garbageBytes).toBeGreaterThan(0);
      await d.resetConfigurationChanged();
    });

    // Only where the cable can be pulled: a pseudo-terminal cannot be, and the simulator binding run covers this.
    if (canUnplug)
      it('leaves fixed current after the port comes back from a disconnect', async () => {
        const d = driver();
        await d.enterFixedCurrent(12);
        env.rig.apply({ faults: { hart: { unplugged: true } } });
        await until(() => !port.connected, 'the disconnect');
        await expect(d.readPrimaryVariable()).rejects.toThrow(/port not connected/);
        env.rig.apply({ faults: { hart: { unplugged: false } } });
        await until(() => env.rig.snapshot().hart.trim.fixedMa === null && !d.loopCurrentFixed, 'the driver to leave fixed current after the reconnect');
        expect(d.lastTransaction).toMatchObject({ command: 40, outcome: 'ok', request: expect.stringMatching(/ 28 04 00 00 00 00 [0-9A-F]{2}$/) });
      });
  });
}
