/**
 * Bench runtime: the hub, the sample writer (journal + database), the capture engine per bench,
 * the local bench's devices (simulated rig or real serial ports), lines forwarded by agents and
 * browsers, and the simulated rig's control surface. Boot creates one and stops it before the
 * database closes.
 */
import path from 'node:path';
import type { Logger } from 'pino';
import { convertPressure, isPressureUnitId, type OutputMode } from '../../shared/calc';
import { checkEdgeLine, classifyScpiMeterLine, createCalibratorClassifier, SIMCAL_PROFILE, type DeviceKind, type LineClassifier, type LineProtocolProfile } from '../../shared/protocol';
import type { ClientMessage } from '../../shared/schemas/stream';
import { BenchDevices } from '../bench/bench-devices';
import { CaptureEngine, type EngineEvent } from '../bench/capture-engine';
import type { ClockIssue, SenderClock } from '../bench/forward-clock';
import { BenchHub, type ConsumerHandler, type SampleSource, type UnnumberedMessage } from '../bench/hub';
import { SampleJournal } from '../bench/journal';
import { SampleWriter, type SampleSink } from '../bench/sample-writer';
import { defaultBinding } from '../bench/transport';
import type { Db } from '../db/client';
import { sampleRepository } from '../db/repositories/sample.repository';
import { conflict, notFound } from '../errors';
import { SIM_PATHS, SimRig, type SimControl } from '../../simulators/sim-rig';
import type { AutopilotPlan } from '../../simulators/autopilot';

export const DEFAULT_BENCH_ID = 'bench-1';

/** Options of {@link createBenchService}. */
export interface BenchServiceOptions {
  mode: 'sim' | 'serial';
  logger: Logger;
  /** Directory of the sample journal; omit to store without one (in-memory tests). */
  journalDir?: string;
  /** Serial paths of the local bench when `mode` is 'serial'. */
  serialPaths?: { pressure: string; current: string };
  benchId?: string;
  /** Rig options in sim mode (tests). */
  simSeed?: number;
  /** Ring capacity, entries. Default 200 000. */
  ringCapacity?: number;
  /** Start no local devices (bench figures, agents-only servers). */
  noLocalDevices?: boolean;
  /** Sample writer interval, ms. Default 250. */
  flushMs?: number;
  /** Line protocol of the local pressure calibrator. Default the simulated calibrator's (query mode). */
  profile?: LineProtocolProfile;
}

/** Transfer data a run gives the simulated transmitter when the autopilot drives it. */
export interface SimRunContext {
  unit: string;
  lrv: number;
  urv: number;
  outputMode: OutputMode;
  cutoff: { mode: 'none' } | { mode: 'clamp'; flowPct: number } | { mode: 'linear'; breakpointDpPct: number };
  holdSeconds: number;
  points: { targetDp: number; approach: 'up' | 'down' }[];
}

/** Body of `POST /api/sim` once validated (SimControl, with the autopilot tied to the current run). */
export interface SimRequest extends Omit<SimControl, 'autopilot'> {
  autopilot?:
    | 'stop'
    | {
        speed?: number;
        holdSeconds?: number;
        overshoot?: { fraction: number; points?: number[] };
        leak?: { perMin: number; points?: number[] };
        /** Leave the transmitter's range and output mode alone (default: match the run's instrument). */
        keepTransmitter?: boolean;
      };
}

export function createBenchService(db: Db, o: BenchServiceOptions) {
  const benchId = o.benchId ?? DEFAULT_BENCH_ID;
  const repo = sampleRepository(db);
  const sink: SampleSink = {
    insertMany: (rows) => repo.insertMany(rows),
    maxSeq: () => repo.maxSeq(),
    existingSeqs: (a, b) => repo.existingSeqs(a, b),
  };
  const hub = new BenchHub({
    ringCapacity: o.ringCapacity,
    onConsumerError: (name, error) => o.logger.error({ err: error, consumer: name }, 'bench consumer failed'),
  });
  const journal = o.journalDir ? new SampleJournal(o.journalDir) : undefined;
  const writer = new SampleWriter({ sink, journal, flushMs: o.flushMs, onError: (e) => o.logger.error({ err: e }, 'sample write failed; will retry') });
  const engines = new Map<string, CaptureEngine>();
  /** Latest placed time (monotonic ms) of a forwarded line, per bench. */
  const placedUpTo = new Map<string, number>();
  const engineListeners: ((e: EngineEvent) => void)[] = [];
  const rig = o.mode === 'sim' && !o.noLocalDevices ? new SimRig({ seed: o.simSeed ?? 1, source: { timeConstantS: 1.5 } }) : undefined;
  let devices: BenchDevices | undefined;
  let simContext: (() => SimRunContext | undefined) | undefined;
  const classifiers: Record<DeviceKind, LineClassifier> = { current: classifyScpiMeterLine, pressure: createCalibratorClassifier(o.profile ?? SIMCAL_PROFILE) };

  function engine(id: string): CaptureEngine {
    let e = engines.get(id);
    if (!e) {
      e = new CaptureEngine(id);
      e.on('event', (ev) => {
        hub.publish(toMessage(ev));
        if (ev.type === 'run.changed') hub.setRun(id, ev.status === 'running' || ev.status === 'paused' ? ev.runId : null);
        if (ev.type === 'point.captured' && id === benchId) rig?.releaseAutopilotPoint(ev.index);
        for (const l of engineListeners) l(ev);
      });
      hub.subscribe(`capture-engine:${id}`, e.consume);
      engines.set(id, e);
    }
    return e;
  }

  return {
    hub,
    writer,
    rig,
    benchId,
    mode: o.mode,

    /** Replays the journal, continues the sequence, subscribes the consumers and opens the local devices. */
    async start(): Promise<void> {
      const next = await writer.start();
      hub.setNextSeq(next);
      hub.subscribe('sample-writer', writer.consume);
      engine(benchId);
      if (o.noLocalDevices) return;
      const paths = o.mode === 'sim' ? SIM_PATHS : o.serialPaths;
      if (!paths) {
        o.logger.warn('BENCH=serial without BENCH_PRESSURE_PORT and BENCH_CURRENT_PORT: no local bench devices');
        return;
      }
      devices = new BenchDevices({
        benchId,
        binding: rig ? rig.binding : defaultBinding(),
        paths,
        profile: o.profile,
        onSample: (device, raw, value, unit) => hub.ingestSample({ benchId, device, raw, value, unit }),
        onStatus: (ev) =>
          hub.publish(
            ev.type === 'device.connected'
              ? { type: 'device.connected', benchId, device: ev.device, path: ev.path, at: ev.at }
              : { type: 'device.disconnected', benchId, device: ev.device, path: ev.path, at: ev.at, reason: ev.reason ?? 'lost' },
          ),
        onError: () => {},
      });
      devices.start();
    },

    /** Closes the devices, flushes the writer and syncs the journal. */
    async stop(): Promise<void> {
      await devices?.stop();
      rig?.dispose();
      await hub.drain();
      await writer.stop();
    },

    /** The capture engine of a bench (created on first use). */
    engine,

    /** Listens to every engine's events (the run service persists them). */
    onEngineEvent(listener: (e: EngineEvent) => void): void {
      engineListeners.push(listener);
    },

    /** Adds a consumer of the hub (the stream server). */
    subscribe(name: string, handler: ConsumerHandler): () => void {
      return hub.subscribe(name, handler);
    },

    /**
     * Lines read elsewhere (agent, browser Web Serial), decoded by the shared protocol code as if
     * from a port. The caller has decided that the sender may feed this bench (forward.service).
     * Server time decides: each line is placed on this server's monotonic clock by `clock` (bounded
     * by the batch's arrival; backlog lines flagged), its wall time is the server's, and the
     * sender's own time is kept as `clientWallMs`. The clock's issues are returned (the caller warns the run).
     */
    ingestForwarded(
      msg: Extract<ClientMessage, { type: 'lines.forwarded' }>,
      from: { source: SampleSource; clock: SenderClock; arrivalMonoMs?: number; arrivalWallMs?: number },
    ): { accepted: number; rejected: number; firstSeq: number; lastSeq: number; backlog: number; issues: ClockIssue[] } {
      const arrivalMono = from.arrivalMonoMs ?? performance.now();
      const arrivalWall = from.arrivalWallMs ?? Date.now();
      // Lines are placed no earlier than the bench's latest one, nor later than now (a batch processed late is still placed at its arrival).
      const floor = placedUpTo.get(msg.benchId) ?? -Infinity;
      const placed = from.clock.place(msg, arrivalMono, arrivalWall, floor);
      let accepted = 0;
      let rejected = 0;
      let backlog = 0;
      let firstSeq = 0;
      let lastSeq = 0;
      msg.lines.forEach((l, i) => {
        // The edge: a line that a port could never deliver (control characters, overlong) is counted and dropped here.
        const edge = checkEdgeLine(l.raw);
        if (!edge.ok) {
          rejected++;
          hub.counters(msg.benchId, l.device).edgeRefused++;
          return;
        }
        const frame = classifiers[l.device](edge.line);
        if (frame.type === 'text') return;
        const ok = frame.type === 'sample';
        if (ok) accepted++;
        else rejected++;
        const tMs = placed.tMs[i]!;
        const late = placed.backlog[i]!;
        if (late) backlog++;
        const e = hub.ingestSample({
          benchId: msg.benchId,
          device: l.device,
          raw: edge.line,
          value: ok ? frame.sample.value : null,
          unit: ok ? frame.sample.unit : null,
          wallMs: arrivalWall - (arrivalMono - tMs),
          tMs,
          source: from.source,
          clientWallMs: l.wallMs,
          backlog: late,
        });
        if (!firstSeq) firstSeq = e.seq;
        lastSeq = e.seq;
        placedUpTo.set(msg.benchId, tMs);
      });
      if (!engines.has(msg.benchId)) engine(msg.benchId);
      return { accepted, rejected, firstSeq, lastSeq, backlog, issues: placed.issues };
    },

    /** The form in which a forwarded line would be stored (edge-checked), or undefined if it would not be stored. */
    storedLine(device: DeviceKind, raw: string): string | undefined {
      const edge = checkEdgeLine(raw);
      if (!edge.ok || classifiers[device](edge.line).type === 'text') return undefined;
      return edge.line;
    },

    /** Samples after a seq from the database (stream resume older than the ring, durability checks). */
    samplesAfter: (seq: number, limit: number, bench?: string) => repo.after(seq, limit, bench),

    /** Devices, counters and storage state. */
    status() {
      const local = devices?.status();
      return {
        mode: o.mode,
        benchId,
        latestSeq: hub.latestSeq,
        ackedSeq: writer.stats.ackedSeq,
        storedSeq: writer.stats.storedSeq,
        writer: { ...writer.stats },
        ring: { length: hub.ring.length, capacity: hub.ring.capacity, oldestSeq: hub.ring.oldestSeq ?? null },
        consumers: hub.consumerStats(),
        benches: hub.benches().map((b) => ({
          ...b,
          activeRunId: engines.get(b.benchId)?.activeRunId ?? null,
          local: b.benchId === benchId && local ? local : null,
        })),
      };
    },

    /** Gives the sim the current run's transfer data and plan (set by the run service). */
    setSimContext(fn: () => SimRunContext | undefined): void {
      simContext = fn;
    },

    /** Applies a sim control (BENCH=sim only). */
    sim(req: SimRequest) {
      if (!rig) throw conflict('The simulated rig is not running: this server uses real instruments (BENCH=serial)');
      const { autopilot, ...rest } = req;
      const control: SimControl = { ...rest };
      if (autopilot === 'stop') control.autopilot = 'stop';
      else if (autopilot) {
        const ctx = simContext?.();
        if (!ctx) throw notFound('No run is active on the bench: start a run before the autopilot');
        const toRig = (v: number) => (ctx.unit !== rig.unit && isPressureUnitId(ctx.unit) && isPressureUnitId(rig.unit) ? convertPressure(v, ctx.unit, rig.unit) : v);
        if (!autopilot.keepTransmitter) {
          control.transmitter = {
            lrv: toRig(ctx.lrv),
            urv: toRig(ctx.urv),
            outputMode: ctx.outputMode,
            cutoff: ctx.cutoff.mode === 'linear' ? { mode: 'linear-below', breakpointDpPct: ctx.cutoff.breakpointDpPct } : ctx.cutoff,
            ...req.transmitter,
          };
        }
        const speed = autopilot.speed ?? 1;
        // The autopilot moves on when the engine captures the point; this is only the longest it waits
        // (in real time: the engine's hold is not sped up), so a point that cannot be captured is left.
        const dwellS = autopilot.holdSeconds ?? ctx.holdSeconds * 4 + 10;
        const plan: AutopilotPlan = {
          points: ctx.points.map((p) => ({ targetDp: toRig(p.targetDp), direction: p.approach })),
          holdSeconds: dwellS * speed,
          speed,
          ...(autopilot.overshoot ? { overshoot: autopilot.overshoot } : {}),
          ...(autopilot.leak ? { leak: { perMin: toRig(autopilot.leak.perMin), points: autopilot.leak.points } } : {}),
        };
        control.autopilot = plan;
      }
      return rig.apply(control);
    },

    simSnapshot() {
      if (!rig) throw conflict('The simulated rig is not running: this server uses real instruments (BENCH=serial)');
      return rig.snapshot();
    },
  };
}
export type BenchService = ReturnType<typeof createBenchService>;

/** An engine event as the stream message it is sent as (captures carry no data on the stream). */
function toMessage(e: EngineEvent): UnnumberedMessage {
  switch (e.type) {
    case 'point.changed':
      return { type: 'point.changed', runId: e.runId, index: e.index, state: e.state, flags: e.flags, hold: e.hold };
    case 'point.captured':
      return { type: 'point.captured', runId: e.runId, index: e.index, manual: e.manual };
    case 'run.warned':
      return { type: 'run.warned', runId: e.runId, index: e.index, kind: e.kind, message: e.message, ratePctSpanPerMin: e.ratePctSpanPerMin };
    case 'run.changed':
      return { type: 'run.changed', runId: e.runId, status: e.status, currentIndex: e.currentIndex };
  }
}

/** Journal directory inside a data directory. */
export const journalDirOf = (dataDir: string) => path.join(dataDir, 'journal');
