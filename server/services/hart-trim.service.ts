/**
 * Trims by HART command, from the job's trims step. The output (loop-current) trim is hands-free:
 * with the cautions confirmed, the loop is fixed at 4 mA (command 40), the meter's held reading is
 * sent (command 45), then 20 mA and command 46, then 4, 12 and 20 mA are verified, and fixed current
 * is always left (command 40 with 0) — on finish, failure, abort, a lost port and server stop. The
 * zero trim (command 43) is sent with zero pressure held. Writes are refused while the device
 * reports write protect. Every write is kept with its request, reply, who asked and when (hart-writes.ts).
 */
import { randomUUID } from 'node:crypto';
import type { HartTrim } from '../../shared/schemas/hart-job';
import type { HartMasterDriver } from '../bench/protocols';
import type { BenchHub } from '../bench/hub';
import { conflict } from '../errors';
import type { SessionUser } from './auth.service';
import { waitForMeterHold } from './meter-hold';
import type { HartWriteLog } from './hart-writes';

/** Loop-current levels of the output trim and its verification, mA (common practice: the trim points, and mid-scale to verify). */
export const TRIM_LEVELS = { zero: 4, gain: 20, verify: [4, 12, 20] } as const;

export interface HartTrimDeps {
  hub: BenchHub;
  benchId: string;
  /** Hold time of the meter at each level, ms. */
  holdMs: number;
  /** The longest wait for a hold, ms. Default holdMs × 6 + 10 s. */
  holdTimeoutMs?: number;
  log: HartWriteLog;
  /** Persists the trim's state (called at every step and at the end). */
  save(jobId: string, trim: HartTrim): Promise<void>;
  /** After an output trim has ended and left fixed current. */
  ended?(jobId: string, actor: SessionUser): Promise<void>;
}

export function createHartTrims(d: HartTrimDeps) {
  /** The trim running per job, with its abort switch and its end. */
  const running = new Map<string, { trim: HartTrim; abort: AbortController; done: Promise<void> }>();

  const stamp = (actor: SessionUser) => ({ by: actor.id, byName: actor.name, startedAt: new Date().toISOString(), endedAt: null, error: null });

  async function refuseIfProtected(driver: HartMasterDriver): Promise<void> {
    const info = (await driver.readDeviceInformation()).value;
    if (info.writeProtect === 1) throw conflict('The device reports write protect: no trim is sent. Remove the write protection under site procedures, read the device again, and retry');
  }

  async function outputTrim(jobId: string, actor: SessionUser, driver: HartMasterDriver, trim: HartTrim, signal: AbortSignal): Promise<void> {
    const save = () => d.save(jobId, trim).catch(() => {});
    const step = async (words: string) => {
      if (signal.aborted) throw new Error('aborted by the technician');
      trim.step = words;
      await save();
    };
    const hold = async (level: number) => {
      await step(`waiting for the meter to hold at ${level} mA`);
      return waitForMeterHold({ hub: d.hub, benchId: d.benchId, holdMs: d.holdMs, timeoutMs: d.holdTimeoutMs ?? d.holdMs * 6 + 10_000, signal });
    };
    const fix = async (level: number) => {
      await step(`fixing the loop current at ${level} mA`);
      trim.fixedMa = await d.log.write(jobId, actor, 'output-trim', `${level} mA`, () => driver.enterFixedCurrent(level));
    };
    // The status changes only once fixed current is left: until then the trim is still running.
    let outcome: HartTrim['status'] = 'running';
    try {
      await fix(TRIM_LEVELS.zero);
      const m4 = await hold(TRIM_LEVELS.zero);
      trim.readings.push({ stage: 'trim', fixedMa: 4, meterMa: m4, errorMa: m4 - 4 });
      await step('sending the 4 mA reading (command 45)');
      await d.log.write(jobId, actor, 'output-trim', `${m4.toFixed(4)} mA`, () => driver.trimLoopZero(m4));
      await fix(TRIM_LEVELS.gain);
      const m20 = await hold(TRIM_LEVELS.gain);
      trim.readings.push({ stage: 'trim', fixedMa: 20, meterMa: m20, errorMa: m20 - 20 });
      await step('sending the 20 mA reading (command 46)');
      await d.log.write(jobId, actor, 'output-trim', `${m20.toFixed(4)} mA`, () => driver.trimLoopGain(m20));
      for (const level of TRIM_LEVELS.verify) {
        await fix(level);
        const m = await hold(level);
        trim.readings.push({ stage: 'verify', fixedMa: level, meterMa: m, errorMa: m - level });
      }
      outcome = 'done';
      trim.step = 'trimmed and verified';
    } catch (e) {
      outcome = signal.aborted ? 'aborted' : 'failed';
      trim.error = (e as Error).message;
    } finally {
      // Always: back to the measured output, whatever happened above.
      trim.step = `${trim.step}; leaving fixed current`;
      try {
        await d.log.write(jobId, actor, 'output-trim', '0 mA (leave fixed current)', () => driver.leaveFixedCurrent());
        trim.fixedMa = null;
        // The status and the error are shown beside the step: the step says only where the device was left.
        trim.step = outcome === 'done' ? 'trimmed and verified; fixed current left' : 'fixed current left';
      } catch (e) {
        trim.error = `${trim.error ? `${trim.error}; ` : ''}leaving fixed current failed (${(e as Error).message}); the driver retries after reconnecting`;
      }
      trim.endedAt = new Date().toISOString();
      trim.status = outcome;
      await save();
    }
  }

  return {
    /** Starts the hands-free output trim; resolves once it is under way (its state is in `current`). */
    async startOutputTrim(jobId: string, actor: SessionUser, driver: HartMasterDriver): Promise<HartTrim> {
      if ([...running.values()].some((r) => r.trim.status === 'running')) throw conflict('A trim is already running on this bench');
      await refuseIfProtected(driver);
      const trim: HartTrim = { id: randomUUID(), kind: 'output-trim', status: 'running', step: 'starting', fixedMa: null, readings: [], confirmed: ['loop in manual', 'operators informed'], ...stamp(actor) };
      const abort = new AbortController();
      // A lost port ends the trim (the driver leaves fixed current after the reconnect).
      const onPort = (ev: { type: string }) => ev.type === 'device.disconnected' && abort.abort(new Error('the HART modem was disconnected'));
      driver.on('port.status', onPort);
      await d.save(jobId, trim);
      const done = outputTrim(jobId, actor, driver, trim, abort.signal)
        .then(() => d.ended?.(jobId, actor))
        .catch(() => {})
        .finally(() => {
          driver.off('port.status', onPort);
          // Only this trim's entry: a next trim may have started while this one was being wrapped up.
          if (running.get(jobId)?.trim === trim) running.delete(jobId);
        });
      running.set(jobId, { trim, abort, done });
      return trim;
    },

    /** Command 43 with zero pressure held: the PV before and after, and the write kept. */
    async zeroTrim(jobId: string, actor: SessionUser, driver: HartMasterDriver): Promise<HartTrim> {
      if ([...running.values()].some((r) => r.trim.status === 'running')) throw conflict('A trim is already running on this bench');
      await refuseIfProtected(driver);
      const trim: HartTrim = { id: randomUUID(), kind: 'zero-trim', status: 'running', step: 'reading the PV', fixedMa: null, readings: [], confirmed: ['zero pressure held'], ...stamp(actor) };
      try {
        trim.pvBefore = (await driver.readPrimaryVariable()).value.value;
        trim.step = 'setting the PV zero (command 43)';
        await d.log.write(jobId, actor, 'zero-trim', null, () => driver.setPvZero());
        trim.pvAfter = (await driver.readPrimaryVariable()).value.value;
        trim.status = 'done';
        trim.step = 'zero set';
      } catch (e) {
        trim.status = 'failed';
        trim.error = (e as Error).message;
      }
      trim.endedAt = new Date().toISOString();
      await d.save(jobId, trim);
      return trim;
    },

    /** The running trim of a job, if any. */
    current: (jobId: string) => running.get(jobId)?.trim,

    /** Aborts the job's running trim and waits until fixed current is left. */
    async abort(jobId: string): Promise<HartTrim | undefined> {
      const r = running.get(jobId);
      if (!r) return undefined;
      r.abort.abort(new Error('aborted by the technician'));
      await r.done;
      return r.trim;
    },

    /** Server stop: aborts every trim and waits for each to leave fixed current. */
    async stop(): Promise<void> {
      const all = [...running.values()];
      for (const r of all) r.abort.abort(new Error('the server is stopping'));
      await Promise.all(all.map((r) => r.done));
    },
  };
}
export type HartTrims = ReturnType<typeof createHartTrims>;
