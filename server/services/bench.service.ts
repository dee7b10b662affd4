/**
 * Bench runtime: the sample writer (journal + database) on the hub, the local bench's devices (on
 * the serialport binding the composition root chose: real ports or the simulated rig), and lines
 * forwarded by agents and browsers. The hub and the capture engines are built by the composition
 * root and given to it. Boot creates one and stops it before the database closes.
 */
import { randomBytes } from 'node:crypto';
import path from 'node:path';
import type { Logger } from 'pino';
import { checkEdgeLine, classifyScpiMeterLine, previewLine, createCalibratorClassifier, SIMCAL_PROFILE, type DeviceKind, type LineClassifier, type LineProtocolProfile } from '../../shared/protocol';
import type { ClientMessage } from '../../shared/schemas/stream';
import { BenchDevices } from '../bench/bench-devices';
import type { CaptureEngines } from '../bench/capture-engines';
import type { ClockIssue, SenderClock } from '../bench/forward-clock';
import type { BenchHub, ConsumerHandler, SampleSource } from '../bench/hub';
import { SampleJournal, type DamagedBatch } from '../bench/journal';
import { replayPages } from '../bench/replay';
import { SeqReservation } from '../bench/seq-reservation';
import { SampleWriter, type SampleSink } from '../bench/sample-writer';
import type { BindingInterface } from '../bench/transport';
import type { Db } from '../db/client';
import { sampleRepository } from '../db/repositories/sample.repository';

export const DEFAULT_BENCH_ID = 'bench-1';

/** Options of {@link createBenchService}. */
export interface BenchServiceOptions {
  mode: 'sim' | 'serial';
  logger: Logger;
  /** The hub every line and event goes through (built by the composition root). */
  hub: BenchHub;
  /** The capture engines of every bench (built by the run service over the same hub). */
  engines: CaptureEngines;
  /** Directory of the sample journal; omit to store without one (in-memory tests). */
  journalDir?: string;
  /**
   * The local bench's devices: the serialport binding (real, or the simulated rig's) and the two
   * ports' paths. Omit for no local devices (agents-only servers, BENCH=serial without ports).
   */
  local?: { binding: BindingInterface; paths: { pressure: string; current: string; hart?: string }; hartModem?: 'usb' | 'rts' };
  benchId?: string;
  /** Sample writer interval, ms. Default 250. */
  flushMs?: number;
  /** Line protocol of the local pressure calibrator. Default the simulated calibrator's (query mode). */
  profile?: LineProtocolProfile;
}

export function createBenchService(db: Db, o: BenchServiceOptions) {
  const benchId = o.benchId ?? DEFAULT_BENCH_ID;
  const repo = sampleRepository(db);
  const sink: SampleSink = {
    insertMany: (rows) => repo.insertMany(rows),
    maxSeq: () => repo.maxSeq(),
    existingSeqs: (a, b) => repo.existingSeqs(a, b),
    quarantine: repo.quarantine,
  };
  const hub = o.hub;
  const journal = o.journalDir ? new SampleJournal(o.journalDir) : undefined;
  const writer = new SampleWriter({
    sink,
    journal,
    flushMs: o.flushMs,
    onError: (e) => o.logger.error({ err: e }, 'sample write failed; will retry'),
    onQuarantine: (items) => {
      storage.quarantine = { total: storage.quarantine.total + items.length, unacknowledged: storage.quarantine.unacknowledged + items.length };
      o.logger.warn({ rows: items.map((i) => ({ seq: i.row.seq, benchId: i.row.benchId, device: i.row.device, raw: previewLine(i.row.raw), reason: i.reason })) }, 'samples the database refused were set aside in sample_quarantine; review them on the Bench page');
    },
    onDamaged: (damaged) => o.logger.warn({ damaged }, 'damaged sample journal batches were set aside beside the journal; every intact batch was replayed; review them on the Bench page'),
  });
  // Quarantined rows and damaged journal batches, as last read (status() is synchronous); refreshed
  // at start, after each quarantine, on acknowledgement and by the health check.
  const storage = { quarantine: { total: 0, unacknowledged: 0 }, damaged: [] as DamagedBatch[] };
  async function refreshStorage(): Promise<typeof storage> {
    storage.quarantine = await repo.quarantine.count();
    storage.damaged = journal ? await journal.damagedBatches() : [];
    return storage;
  }
  const engines = o.engines;
  /** Latest placed time (monotonic ms) of a forwarded line, per bench. */
  const placedUpTo = new Map<string, number>();
  let devices: BenchDevices | undefined;
  let seqs: SeqReservation | undefined;
  /** This start's stream epoch: a resume that names another gets `stream.reset`. */
  const epoch = randomBytes(6).toString('base64url');
  const classifiers: Record<DeviceKind, LineClassifier> = { current: classifyScpiMeterLine, pressure: createCalibratorClassifier(o.profile ?? SIMCAL_PROFILE) };

  const engine = (id: string) => engines.get(id);

  return {
    hub,
    writer,
    benchId,
    mode: o.mode,
    epoch,
    /** Last sequence number handed out. */
    latestSeq: () => hub.latestSeq,

    /**
     * Replays the journal, continues the sequence after every number an earlier process reserved
     * (seq-reservation.ts), subscribes the consumers and opens the local devices.
     */
    async start(): Promise<void> {
      const next = await writer.start();
      await refreshStorage();
      seqs = o.journalDir ? new SeqReservation(o.journalDir) : undefined;
      if (seqs?.damaged) o.logger.warn({ file: seqs.file }, 'sequence reservation unreadable: numbering continues after the stored samples only');
      hub.setNextSeq(seqs ? seqs.start(next) : next);
      if (seqs) hub.guardSeqs(seqs.ensure);
      hub.subscribe('sample-writer', writer.consume);
      engine(benchId);
      if (!o.local) return;
      devices = new BenchDevices({
        benchId,
        binding: o.local.binding,
        paths: o.local.paths,
        ...(o.local.paths.hart ? { hart: { path: o.local.paths.hart, modem: o.local.hartModem ?? 'usb' } } : {}),
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
      await hub.drain();
      await writer.stop();
      seqs?.close();
    },

    /** The capture engine of a bench (created on first use). */
    engine,

    /** The local bench's HART modem, when it has one (after start). */
    hart: () => devices?.hart,

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

    /**
     * Stream resume: the messages numbered in (`since`, `upTo`], in pages of at most `pageSize`, from
     * the ring or, for what it has evicted, the stored samples (replay.ts).
     */
    replay: (since: number, upTo: number, pageSize: number) =>
      replayPages({ ring: hub.ring, stored: (after, limit) => repo.after(after, limit), storedUpTo: () => writer.stats.storedSeq }, since, upTo, pageSize),

    /** Samples after a seq from the database (durability checks). */
    samplesAfter: (seq: number, limit: number, bench?: string) => repo.after(seq, limit, bench),

    /** Re-reads the quarantine and damaged-batch counts (health check). */
    refreshStorage,

    /** Where samples are kept: the journal's directory (undefined without a journal). */
    journalDir: journal?.dir,

    /** Rows set aside by the writer (newest first) and damaged journal batches set aside, for review. */
    async storageReview(limit: number) {
      const [items] = await Promise.all([repo.quarantine.list(limit), refreshStorage()]);
      return {
        quarantine: { ...storage.quarantine, items: items.map((q) => ({ ...q, preview: previewLine(q.raw, 120) })) },
        damaged: storage.damaged,
      };
    },

    /** Marks every quarantined row and damaged batch as reviewed by `userId`; what it marked. */
    async acknowledgeStorage(userId: string): Promise<{ rows: number[]; batches: number }> {
      const rows = await repo.quarantine.acknowledge(userId);
      const batches = journal ? await journal.acknowledgeDamaged(userId) : 0;
      await refreshStorage();
      return { rows, batches };
    },

    /** Devices, counters and storage state. */
    status() {
      const local = devices?.status();
      const hubBenches = hub.benches();
      return {
        mode: o.mode,
        benchId,
        latestSeq: hub.latestSeq,
        ackedSeq: writer.stats.ackedSeq,
        storedSeq: writer.stats.storedSeq,
        writer: { ...writer.stats },
        ring: { length: hub.ring.length, capacity: hub.ring.capacity, oldestSeq: hub.ring.oldestSeq ?? null },
        consumers: hub.consumerStats(),
        storage: {
          quarantined: storage.quarantine,
          damagedBatches: { total: storage.damaged.length, unacknowledged: storage.damaged.filter((d) => !d.acknowledgedAt).length },
          edgeRefused: hubBenches.reduce((n, b) => n + Object.values(b.devices).reduce((m, d) => m + d.edgeRefused, 0), 0),
        },
        benches: hubBenches.map((b) => ({
          ...b,
          activeRunId: engines.activeRunId(b.benchId),
          local: b.benchId === benchId && local ? local : null,
        })),
      };
    },

  };
}
export type BenchService = ReturnType<typeof createBenchService>;

/** Journal directory inside a data directory. */
export const journalDirOf = (dataDir: string) => path.join(dataDir, 'journal');
