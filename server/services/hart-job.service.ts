/**
 * HART in the job's preparation: reads the transmitter's identity and configuration (commands 0,
 * 13, 15) through the local bench's HART modem, compares them with the register (hart-compare.ts),
 * and blocks the run on a disagreement until the technician corrects the register or records the
 * device as found, each with a reason, audited and kept with the job. Write commands are logged
 * here too (hart-writes.ts), so the record and the audit trail carry them.
 */
import { CMD80_TRIM_POINTS, HART_TRANSFER_FUNCTIONS, unitOfCode, type HartDeviceInformation, type HartIdentity, type HartTagDescriptorDate } from '../../shared/protocol/hart';
import type { HartMismatch, HartPoint, HartReading, HartTrim, HartWrite, JobHart } from '../../shared/schemas/hart-job';
import type { OutputMode } from '../../shared/schemas/instruments';
import type { HartModem } from '../bench/hart-modem';
import { HartResponseError } from '../bench/protocols';
import type { BenchHub } from '../bench/hub';
import { createHartTrims } from './hart-trim.service';
import { createHartWriteLog } from './hart-writes';
import type { Db } from '../db/client';
import { hartRepository, type JobHartRow } from '../db/repositories/hart.repository';
import { instrumentRepository, jobRepository } from '../db/repositories/register.repository';
import { badRequest, conflict, forbidden, locked, notFound } from '../errors';
import type { AuditService } from './audit.service';
import type { SessionUser } from './auth.service';
import { compareHartWithRegister, correctedRegister, type RegisterView } from './hart-compare';
import { hartPointOf, type HartPointContext } from './hart-point';
import type { PointCapture } from '../../shared/schemas/runs';

export interface HartJobOptions {
  /** Whether runs on the local bench use its HART device (HART_IN_JOB; see env.ts). */
  enabled: boolean;
  /** The local bench's id. */
  benchId: string;
  /** The local bench's HART modem, when it has one (read late: the bench starts after the services). */
  modem: () => HartModem | undefined;
  /** The hub (the meter's samples for the trims' holds). */
  hub: BenchHub;
  /** Hold time of the meter at each trim level, ms. */
  holdMs: number;
  /** The run active on a bench, if any (no trim while a run captures). */
  activeRunOn: (benchId: string) => string | undefined;
}

/** The device's reading in the record's words. */
export function readingOf(identity: HartIdentity, tag: HartTagDescriptorDate, info: HartDeviceInformation, at: Date): HartReading {
  return {
    identity: {
      // Revision 7 devices send the manufacturer in bytes 17–18; revision 5 in the high byte of the device type (from memory).
      manufacturerId: identity.manufacturerId ?? identity.expandedDeviceType >> 8,
      expandedDeviceType: identity.expandedDeviceType,
      deviceId: identity.deviceId,
      universalRevision: identity.universalRevision,
      deviceRevision: identity.deviceRevision,
      softwareRevision: identity.softwareRevision,
      tag: tag.tag.trim(),
      descriptor: tag.descriptor.trim(),
    },
    config: {
      unit: unitOfCode(info.rangeUnitCode) ?? null,
      unitCode: info.rangeUnitCode,
      lrv: info.lrv,
      urv: info.urv,
      transferFunctionCode: info.transferFunction,
      transferFunction: HART_TRANSFER_FUNCTIONS[info.transferFunction] ?? `code ${info.transferFunction}`,
      dampingS: info.damping,
      writeProtect: info.writeProtect === 1,
      alarmSelection: info.alarmSelection,
    },
    at: at.toISOString(),
  };
}

/** Whether a record-as-found covers the disagreements now seen (same fields, same device values). */
function covered(now: readonly HartMismatch[], resolution: JobHart['resolution']): boolean {
  if (!now.length) return true;
  if (!resolution || resolution.kind !== 'recorded-as-found') return false;
  return now.every((m) => resolution.mismatches.some((r) => r.field === m.field && r.device === m.device && r.register === m.register));
}

export function createHartJobService(db: Db, audit: AuditService, o: HartJobOptions) {
  const repo = hartRepository(db);
  const jobs = jobRepository(db);
  const instruments = instrumentRepository(db);

  const modemOf = () => (o.enabled ? o.modem() : undefined);
  /** Appends to a job's stored lists one at a time (read, change, write). */
  let chain: Promise<unknown> = Promise.resolve();
  const serial = <T>(fn: () => Promise<T>): Promise<T> => {
    const next = chain.then(fn);
    chain = next.catch(() => {});
    return next;
  };
  const log = createHartWriteLog({
    driver: () => modemOf()?.driver,
    audit,
    append: (jobId: string, w: HartWrite) => serial(async () => repo.put(jobId, { writes: [...(await repo.get(jobId)).writes, w] })),
  });
  const saveTrim = (jobId: string, t: HartTrim) =>
    serial(async () => {
      const trims = (await repo.get(jobId)).trims.filter((x) => x.id !== t.id);
      await repo.put(jobId, { trims: [...trims, structuredClone(t)] });
    });
  const trims = createHartTrims({ hub: o.hub, benchId: o.benchId, holdMs: o.holdMs, log, save: saveTrim, ended: (jobId, actor) => afterTrim(actor, jobId) });

  async function registerOf(jobId: string): Promise<RegisterView & { id: string; cutoffMode: string }> {
    const job = await jobs.get(jobId);
    if (!job) throw notFound('No such job');
    const inst = await instruments.get(job.instrumentId);
    if (!inst) throw notFound('The job\u2019s instrument no longer exists');
    return { id: inst.id, tag: inst.tag, lrv: inst.lrv, urv: inst.urv, unit: inst.unit, outputMode: inst.outputMode as OutputMode, cutoffMode: inst.cutoffMode };
  }

  async function mustPrepare(actor: SessionUser, jobId: string): Promise<void> {
    const job = await jobs.get(jobId);
    if (!job) throw notFound('No such job');
    if (job.assigneeId !== actor.id) throw forbidden('Only the assigned technician prepares this job');
    if (job.status === 'submitted' || job.status === 'approved') throw locked(`The job is ${job.status}; its preparation is locked`);
  }

  /** Commands 0, 13, 15 through the modem, as a reading. */
  async function readDevice(): Promise<HartReading> {
    const modem = modemOf();
    if (!modem) throw conflict('This bench has no HART modem in use');
    const d = modem.driver;
    try {
      const identity = await d.identify();
      const tag = (await d.readTagDescriptorDate()).value;
      const info = (await d.readDeviceInformation()).value;
      // Sensor trim points (command 80, device variable 0): offered, or "command not implemented" (64).
      let sensorTrim: HartReading['sensorTrim'] = 'unknown';
      try {
        await d.send(CMD80_TRIM_POINTS, { deviceVariable: 0 });
        sensorTrim = 'yes';
      } catch (e) {
        if (e instanceof HartResponseError && e.responseCode === 64) sensorTrim = 'no';
      }
      return { ...readingOf(identity, tag, info, new Date()), sensorTrim };
    } catch (e) {
      throw conflict(`The HART device did not answer: ${(e as Error).message}`);
    }
  }

  function blockersOf(row: JobHartRow): string[] {
    if (!modemOf()) return [];
    if (trims.current(row.jobId)?.status === 'running') return ['A HART trim is running: let it finish or abort it'];
    // A trim of another job on this bench, or a loop fixed from elsewhere: a run would read a fixed current.
    if (modemOf()?.driver.loopCurrentFixed) return ['The HART device\u2019s loop current is fixed: let the trim finish or abort it before a run'];
    if (!row.asFound) return ['Read the HART device\u2019s identity and configuration'];
    if (covered(row.mismatches, row.resolution)) return [];
    return [`The HART device disagrees with the register: ${row.mismatches.map((m) => m.message).join('; ')}. Correct the register or record the device as found, with a reason`];
  }

  async function view(jobId: string): Promise<JobHart> {
    if (!(await jobs.get(jobId))) throw notFound('No such job');
    const row = await repo.get(jobId);
    const live = trims.current(jobId);
    const stored = row.trims.map((t) => (live && t.id === live.id ? live : t));
    return {
      available: !!modemOf(),
      asFound: row.asFound,
      asLeft: row.asLeft,
      mismatches: row.mismatches,
      resolution: row.resolution,
      writes: row.writes,
      trims: stored,
      loopCurrentFixed: modemOf()?.driver.loopCurrentFixed ?? false,
      blockers: blockersOf(row),
    };
  }

  /** Reads the device and compares; the first reading of the job is its configuration as found. */
  async function check(actor: SessionUser, jobId: string): Promise<JobHart> {
    await mustPrepare(actor, jobId);
    const reading = await readDevice();
    const register = await registerOf(jobId);
    const mismatches = compareHartWithRegister(reading.identity, reading.config, register);
    const row = await repo.get(jobId);
    const first = !row.asFound;
    // The first reading is the configuration as found; later ones are the configuration as left.
    await repo.put(jobId, { ...(first ? { asFound: reading } : { asLeft: reading }), mismatches });
    await audit.record(actor, 'job.hart-read', 'job', jobId, undefined, { reading, mismatches, asFound: first });
    return view(jobId);
  }

  /** After a trim: the configuration as left, read again (kept when the device answers). */
  async function afterTrim(actor: SessionUser, jobId: string): Promise<void> {
    if (!(await repo.get(jobId)).asFound) return;
    await check(actor, jobId).catch(() => {});
  }

  return {
    view,
    check,

    /** Corrects the register to the device (range, unit, output mode) with a reason; audited on the instrument and the job. */
    async correctRegister(actor: SessionUser, jobId: string, reason: string): Promise<JobHart> {
      await mustPrepare(actor, jobId);
      const reading = await readDevice();
      const register = await registerOf(jobId);
      const before = compareHartWithRegister(reading.identity, reading.config, register);
      if (!before.length) throw badRequest('The device agrees with the register: there is nothing to correct', { reason: ['Nothing to correct'] });
      if (before.some((m) => m.field === 'tag')) {
        throw badRequest('The device\u2019s tag differs from the register: check that this is the right transmitter, or record it as found', { reason: ['A tag is not corrected from the device'] });
      }
      const patch = correctedRegister(reading.config, register, before);
      if (!Object.keys(patch).length) throw badRequest('The device\u2019s values cannot be written to the register (an unknown unit code)', { reason: ['Record the device as found instead'] });
      const instBefore = await instruments.get(register.id);
      await instruments.update(register.id, patch);
      await audit.record(actor, 'instrument.corrected-from-device', 'instrument', register.id, instBefore, { ...patch, reason, jobId, source: 'HART commands 0, 13, 15' });
      const after = compareHartWithRegister(reading.identity, reading.config, await registerOf(jobId));
      const stamp = { by: actor.id, byName: actor.name, at: new Date().toISOString() };
      const row = await repo.get(jobId);
      await repo.put(jobId, { ...(row.asFound ? {} : { asFound: reading }), mismatches: after, resolution: { kind: 'register-corrected', reason, mismatches: before, ...stamp } });
      await audit.record(actor, 'job.hart-register-corrected', 'job', jobId, { mismatches: before }, { mismatches: after, reason, patch });
      return view(jobId);
    },

    /** Records the device as found despite the disagreements: an explicit acknowledgement with a reason, kept in the record. */
    async recordAsFound(actor: SessionUser, jobId: string, reason: string): Promise<JobHart> {
      await mustPrepare(actor, jobId);
      const row = await repo.get(jobId);
      if (!row.asFound) throw badRequest('Read the HART device first', { reason: ['Nothing read yet'] });
      if (!row.mismatches.length) throw badRequest('The device agrees with the register: there is nothing to acknowledge', { reason: ['Nothing to acknowledge'] });
      const resolution = { kind: 'recorded-as-found' as const, reason, mismatches: row.mismatches, by: actor.id, byName: actor.name, at: new Date().toISOString() };
      await repo.put(jobId, { resolution });
      await audit.record(actor, 'job.hart-recorded-as-found', 'job', jobId, undefined, resolution);
      return view(jobId);
    },

    /**
     * What blocks a run on `benchId`: nothing off the local bench or without a HART modem in use;
     * otherwise the device is read (once per job, at the first start) and must agree or be resolved.
     */
    async blockersForRun(actor: SessionUser, jobId: string, benchId: string): Promise<string[]> {
      if (benchId !== o.benchId || !modemOf()) return [];
      let row = await repo.get(jobId);
      if (!row.asFound) {
        await check(actor, jobId);
        row = await repo.get(jobId);
      }
      return blockersOf(row);
    },

    /** The device's digital PV and loop current over a point's hold, on the local bench with HART in use. */
    pointAtCapture(benchId: string, capture: PointCapture, ctx: HartPointContext): HartPoint | undefined {
      const modem = benchId === o.benchId ? modemOf() : undefined;
      return modem ? hartPointOf(modem.readings, capture, ctx) : undefined;
    },

    /** Starts the hands-free output trim (cautions confirmed in the body's schema). */
    async outputTrim(actor: SessionUser, jobId: string): Promise<JobHart> {
      await mustPrepare(actor, jobId);
      const modem = modemOf();
      if (!modem) throw conflict('This bench has no HART modem in use');
      const active = o.activeRunOn(o.benchId);
      if (active) throw conflict('A run is active on the bench: finish or abort it before trimming the output');
      await trims.startOutputTrim(jobId, actor, modem.driver);
      return view(jobId);
    },

    /** Aborts the running trim; answers once fixed current is left. */
    async abortTrim(actor: SessionUser, jobId: string): Promise<JobHart> {
      await mustPrepare(actor, jobId);
      const t = await trims.abort(jobId);
      if (!t) throw conflict('No trim is running for this job');
      return view(jobId);
    },

    /** Command 43 with zero pressure held. */
    async zeroTrim(actor: SessionUser, jobId: string): Promise<JobHart> {
      await mustPrepare(actor, jobId);
      const modem = modemOf();
      if (!modem) throw conflict('This bench has no HART modem in use');
      if (o.activeRunOn(o.benchId)) throw conflict('A run is active on the bench: finish or abort it before the zero trim');
      await trims.zeroTrim(jobId, actor, modem.driver);
      await afterTrim(actor, jobId);
      return view(jobId);
    },

    /** Server stop: every trim aborted and fixed current left before the bench closes. */
    stop: () => trims.stop(),

    /** The job's stored HART record (for the frozen record). */
    record: (jobId: string) => repo.get(jobId),
    /** The modem in use on the local bench, if any. */
    modem: modemOf,
    repo,
  };
}
export type HartJobService = ReturnType<typeof createHartJobService>;
