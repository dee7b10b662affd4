/**
 * One driver test suite, run twice: over the simulator's serialport binding and over socat
 * pseudo-terminals with the real native binding. Nothing is mocked: the real `SerialPortStream`,
 * parsers, command queue and timeouts run in both.
 */
import { afterAll, afterEach, beforeAll, describe, expect, it } from 'vitest';
import { SIMCAL_FEED_PROFILE, SIMCAL_PROFILE } from '../../shared/protocol';
import { openPort, type BindingInterface, type ManagedPort } from '../../server/bench/transport';
import { BadReplyError, LineCalibratorDriver, ScpiMeterDriver } from '../../server/bench/protocols';
import type { SimRig } from '../../simulators/sim-rig';

/** What a suite run needs: a rig, a binding that reaches its devices, and the paths to open. */
export interface DriverSuiteEnv {
  rig: SimRig;
  binding: BindingInterface;
  paths: { pressure: string; current: string };
  teardown(): Promise<void>;
}

/** Rig settings shared by both runs: a fast pump so points settle in tens of milliseconds. */
export const SUITE_RIG = {
  source: { timeConstantS: 0.02, isolateBand: 0.001 },
  transmitter: { lrv: 0, urv: 100 },
  latencyMs: 2,
} as const;

const sleep = (ms: number): Promise<void> => new Promise((r) => setTimeout(r, ms));

/** Registers the driver suite under `name`; `setup` starts the environment (skipped when it returns `undefined`). */
export function defineDriverSuite(name: string, setup: () => Promise<DriverSuiteEnv>): void {
  describe(name, () => {
    let env: DriverSuiteEnv;
    let meterPort: ManagedPort;
    let pressurePort: ManagedPort;
    const drivers: { close(): void }[] = [];

    beforeAll(async () => {
      env = await setup();
      meterPort = openPort({ path: env.paths.current, binding: env.binding });
      pressurePort = openPort({ path: env.paths.pressure, binding: env.binding });
      await Promise.all([meterPort.open(), pressurePort.open()]);
    });

    afterEach(() => {
      for (const d of drivers.splice(0)) d.close();
      env.rig.apply({ faults: { current: { dropReplies: 0, garbage: false, overflow: false }, pressure: { wrongUnit: null, garbage: false } } });
    });

    afterAll(async () => {
      await Promise.all([meterPort?.close(), pressurePort?.close()]);
      await env?.teardown();
    });

    const meter = (options: ConstructorParameters<typeof ScpiMeterDriver>[1] = {}): ScpiMeterDriver => {
      const d = new ScpiMeterDriver(meterPort, options);
      drivers.push(d);
      return d;
    };
    const calibrator = (profile = SIMCAL_PROFILE): LineCalibratorDriver => {
      const d = new LineCalibratorDriver(pressurePort, profile);
      drivers.push(d);
      return d;
    };

    it('identifies the meter (*IDN?)', async () => {
      await expect(meter().identify()).resolves.toEqual({ manufacturer: 'STILLPOINT', model: 'SIM-DMM', serial: '0001', firmware: '1.0' });
    });

    it('configures DC current and reads the loop current in mA; the calibrator reads the applied DP', async () => {
      env.rig.apply({ setpoint: { value: 25 } });
      await sleep(200);
      const m = meter();
      await m.configure();
      expect(env.rig.meter.measuring).toBe('curr');
      const current = await m.read();
      // 25 % of a linear 0–100 range → 4 + 16·0.25 = 8 mA (practice, REFERENCE.md check value).
      expect(current.unit).toBe('mA');
      expect(current.value).toBeCloseTo(8, 2);
      const pressure = await calibrator().read();
      expect(pressure).toMatchObject({ device: 'pressure', unit: 'inH2O@68F' });
      expect(pressure.value).toBeCloseTo(25, 2);
      expect(pressure.raw).toMatch(/^DP \+\d+\.\d{5} inH2O@68F$/);
    });

    it('runs queued commands one at a time, first in first out', async () => {
      const m = meter();
      await m.configure();
      const order: number[] = [];
      await Promise.all([0, 1, 2, 3, 4].map((i) => m.read().then(() => order.push(i))));
      expect(order).toEqual([0, 1, 2, 3, 4]);
      expect(m.stats.queue).toMatchObject({ sent: 8, replied: 6, timeouts: 0 });
    });

    it('polls at the configured rate and offers samples as an async iterator', async () => {
      const m = meter({ pollRateHz: 20 });
      await m.configure();
      const seenAt: number[] = [];
      const controller = new AbortController();
      const collecting = (async () => {
        for await (const _s of m.samples(controller.signal)) {
          seenAt.push(performance.now());
          if (seenAt.length === 11) controller.abort();
        }
      })();
      m.startPolling();
      await collecting;
      m.stopPolling();
      // 20 readings/s: the eleventh poll starts 10 × 50 ms after the first (the poller never starts
      // one early); 20 % allowed for a slow first reply. A busy machine only makes the span longer.
      expect(seenAt.length).toBe(11);
      expect(seenAt[10]! - seenAt[0]!).toBeGreaterThanOrEqual(400);
    });

    it('reads a free-running calibrator', async () => {
      const c = calibrator(SIMCAL_FEED_PROFILE);
      await c.startFeed();
      const first = await c.read();
      const values: number[] = [first.value];
      for await (const s of c.samples(AbortSignal.timeout(400))) values.push(s.value);
      await c.stopFeed();
      expect(values.length).toBeGreaterThanOrEqual(3);
      expect(first.unit).toBe('inH2O@68F');
    });

    it('names the command, the port and the time when no reply comes', async () => {
      const m = meter();
      await m.configure();
      env.rig.apply({ faults: { current: { dropReplies: 1 } } });
      const started = performance.now();
      const error = (await m.read().then(
        () => new Error('unexpected reply'),
        (e: unknown) => e,
      )) as Error;
      expect(error.message).toBe(`READ? on ${env.paths.current}: no reply in 2000 ms`);
      expect(performance.now() - started).toBeGreaterThanOrEqual(1990);
      env.rig.apply({ faults: { current: { dropReplies: 0 } } });
      await expect(m.read()).resolves.toMatchObject({ unit: 'mA' });
      expect(m.stats.queue.timeouts).toBe(1);
    });

    it('rejects a wrong unit and an overflow as counted bad replies, then reads on', async () => {
      const c = calibrator();
      env.rig.apply({ faults: { pressure: { wrongUnit: 'kPa' } } });
      const wrong = await c.read().catch((e: unknown) => e);
      expect(wrong).toBeInstanceOf(BadReplyError);
      expect((wrong as BadReplyError).frame.reason).toBe('wrong-unit');
      expect(c.stats.parser.rejected['wrong-unit']).toBe(1);
      env.rig.apply({ faults: { pressure: { wrongUnit: null } } });
      await expect(c.read()).resolves.toMatchObject({ unit: 'inH2O@68F' });

      const m = meter();
      await m.configure();
      env.rig.apply({ faults: { current: { overflow: true } } });
      await expect(m.read()).rejects.toThrow(/bad reply "\+9\.90000000E\+37" \(overflow\)/);
      expect(m.stats.parser.rejected.overflow).toBe(1);
    });

    it('resynchronises after garbage before every reply and loses no reading', async () => {
      const m = meter();
      await m.configure();
      env.rig.apply({ faults: { current: { garbage: true } } });
      const rejected: string[] = [];
      m.on('line.rejected', (e) => rejected.push(e.reason));
      for (let i = 0; i < 10; i += 1) await expect(m.read()).resolves.toMatchObject({ unit: 'mA' });
      const dropped = m.stats.parser.framer.dropped.binary + m.stats.parser.rejected['not-a-number'] + m.stats.parser.framer.dropped.overlong;
      expect(dropped).toBeGreaterThanOrEqual(8);
      expect(rejected.length).toBe(dropped);
    });
  });
}
