/**
 * Bench hub: every reading and device event gets its arrival timestamps (monotonic and wall clock)
 * and one global sequence number, goes into a bounded ring buffer, and is fanned out to the
 * consumers (capture engine, sample writer, WebSocket stream). Fan-out is synchronous into one
 * queue per consumer; each consumer drains its own queue later, so a slow one never holds up
 * another and nothing on the ingest path awaits.
 */
import type { DeviceKind } from '../../shared/protocol';
import type { StreamEvent, StreamMessage } from '../../shared/schemas/stream';
import { RingBuffer } from './ring-buffer';

/**
 * Where a line came from: this server's own port (`id` the bench id), a registered bench agent
 * (`id` the bench id the agent's token belongs to) or a browser forwarding Web Serial (`id` the
 * user id). Stored with every sample.
 */
export interface SampleSource {
  kind: 'port' | 'agent' | 'browser';
  id: string;
}

/** A raw line received from an instrument (decoded or not). */
export interface SampleEntry {
  kind: 'sample';
  seq: number;
  benchId: string;
  device: DeviceKind;
  /** The line as received, terminator removed. */
  raw: string;
  /** Decoded value in `unit`; null for a line that could not be decoded. */
  value: number | null;
  unit: string | null;
  /** Wall-clock arrival, ms since the epoch. */
  wallMs: number;
  /** Monotonic arrival, ms (`performance.now()` of this process). */
  monoMs: number;
  /**
   * Time base for analysis, ms, always this server's monotonic clock: `monoMs` for local ports; for
   * forwarded lines the arrival, less the sender's spacing within the bounds of forward-clock.ts.
   */
  tMs: number;
  runId: string | null;
  /** Who delivered the line. */
  source: SampleSource;
  /** The sender's own wall clock for a forwarded line (metadata only), ms since the epoch; null for local ports. */
  clientWallMs: number | null;
  /** A forwarded line that was not live when sent (held through a dropped link): stored, never part of a hold. */
  backlog?: boolean;
}

/** Any other event of the capture path (device and run events), numbered as its stream message. */
export interface MessageEntry {
  kind: 'message';
  seq: number;
  message: StreamMessage;
}

export type HubEntry = SampleEntry | MessageEntry;

/** A stream message before it is numbered: an event of the capture path's event map. */
export type UnnumberedMessage = StreamEvent;

/** What a consumer does with a batch; a returned promise holds back that consumer's next batch only. */
export type ConsumerHandler = (batch: HubEntry[]) => void | Promise<void>;

interface Consumer {
  name: string;
  handler: ConsumerHandler;
  queue: HubEntry[];
  scheduled: boolean;
  busy: boolean;
  delivered: number;
  highWater: number;
  errors: number;
}

/** Counters per bench and device. */
export interface DeviceCounters {
  samples: number;
  badLines: number;
  /** Forwarded lines refused at the edge (control characters, overlong), never stored. */
  edgeRefused: number;
  lastWallMs: number | null;
  lastValue: number | null;
  lastUnit: string | null;
  connected: boolean;
  path: string | null;
  /** Last disconnect reason, if any. */
  reason: string | null;
}

/** Converts a hub entry to the stream message it is sent as. */
export function toStreamMessage(e: HubEntry): StreamMessage {
  if (e.kind === 'message') return e.message;
  return {
    type: 'sample.received',
    seq: e.seq,
    benchId: e.benchId,
    device: e.device,
    value: e.value,
    unit: e.unit,
    raw: e.raw,
    wallMs: e.wallMs,
    runId: e.runId,
  };
}

/** Options of {@link BenchHub}. */
export interface BenchHubOptions {
  /** Ring buffer capacity, entries. Default 200 000. */
  ringCapacity?: number;
  /** First sequence number to hand out. Default 1. */
  firstSeq?: number;
  /** Clocks (tests). */
  wallNow?: () => number;
  monoNow?: () => number;
  /** Called when a consumer handler throws or rejects. */
  onConsumerError?: (name: string, error: unknown) => void;
}

/** The hub. One per process; benches are named by id. */
export class BenchHub {
  readonly ring: RingBuffer<HubEntry>;
  private nextSeq: number;
  private readonly consumers: Consumer[] = [];
  private readonly wallNow: () => number;
  private readonly monoNow: () => number;
  private readonly onConsumerError: (name: string, error: unknown) => void;
  private readonly runs = new Map<string, string | null>();
  private readonly devices = new Map<string, DeviceCounters>();
  private seqGuard: ((seq: number) => void) | undefined;

  constructor(options: BenchHubOptions = {}) {
    this.ring = new RingBuffer<HubEntry>(options.ringCapacity ?? 200_000);
    this.nextSeq = options.firstSeq ?? 1;
    this.wallNow = options.wallNow ?? Date.now;
    this.monoNow = options.monoNow ?? (() => performance.now());
    this.onConsumerError = options.onConsumerError ?? (() => {});
  }

  /** Sets the next sequence number (start-up, after the journal and the database were read). */
  setNextSeq(seq: number): void {
    this.nextSeq = Math.max(this.nextSeq, seq);
  }

  /**
   * Called with each sequence number before it is handed out (seq-reservation.ts: reserves the next
   * block durably when the number is past the current one).
   */
  guardSeqs(guard: (seq: number) => void): void {
    this.seqGuard = guard;
  }

  private takeSeq(): number {
    this.seqGuard?.(this.nextSeq);
    return this.nextSeq++;
  }

  /** Last sequence number handed out (0 before any). */
  get latestSeq(): number {
    return this.nextSeq - 1;
  }

  /** Registers a consumer; returns the function that removes it. */
  subscribe(name: string, handler: ConsumerHandler): () => void {
    const c: Consumer = { name, handler, queue: [], scheduled: false, busy: false, delivered: 0, highWater: 0, errors: 0 };
    this.consumers.push(c);
    return () => {
      const i = this.consumers.indexOf(c);
      if (i >= 0) this.consumers.splice(i, 1);
      c.queue.length = 0;
    };
  }

  /** The run that new samples of a bench belong to. */
  setRun(benchId: string, runId: string | null): void {
    this.runs.set(benchId, runId);
  }

  runOf(benchId: string): string | null {
    return this.runs.get(benchId) ?? null;
  }

  /** A reading (or a line that failed to decode, with `value` null) arriving now. */
  ingestSample(s: {
    benchId: string;
    device: DeviceKind;
    raw: string;
    value: number | null;
    unit: string | null;
    tMs?: number;
    wallMs?: number;
    source?: SampleSource;
    clientWallMs?: number | null;
    backlog?: boolean;
  }): SampleEntry {
    const monoMs = this.monoNow();
    const wallMs = s.wallMs ?? this.wallNow();
    const e: SampleEntry = {
      kind: 'sample',
      seq: this.takeSeq(),
      benchId: s.benchId,
      device: s.device,
      raw: s.raw,
      value: s.value,
      unit: s.unit,
      wallMs,
      monoMs,
      tMs: s.tMs ?? monoMs,
      runId: this.runs.get(s.benchId) ?? null,
      source: s.source ?? { kind: 'port', id: s.benchId },
      clientWallMs: s.clientWallMs ?? null,
      ...(s.backlog ? { backlog: true } : {}),
    };
    const d = this.counters(s.benchId, s.device);
    if (s.value === null) d.badLines++;
    else {
      d.samples++;
      d.lastValue = s.value;
      d.lastUnit = s.unit;
    }
    d.lastWallMs = wallMs;
    this.dispatch(e);
    return e;
  }

  /**
   * Any other event: numbered, kept and fanned out. Device events also update the counters. Run
   * events come here only from the run service, once what they change is stored.
   */
  publish(message: StreamEvent): MessageEntry {
    const seq = this.takeSeq();
    const e: MessageEntry = { kind: 'message', seq, message: { ...message, seq } as StreamMessage };
    const m = e.message;
    if (m.type === 'device.connected' || m.type === 'device.disconnected') {
      const d = this.counters(m.benchId, m.device);
      d.connected = m.type === 'device.connected';
      d.path = m.path;
      d.reason = m.type === 'device.disconnected' ? m.reason : null;
    }
    this.dispatch(e);
    return e;
  }

  /** Counters of one device (created on first use). */
  counters(benchId: string, device: DeviceKind): DeviceCounters {
    const key = `${benchId}\u0000${device}`;
    let d = this.devices.get(key);
    if (!d) {
      d = { samples: 0, badLines: 0, edgeRefused: 0, lastWallMs: null, lastValue: null, lastUnit: null, connected: false, path: null, reason: null };
      this.devices.set(key, d);
    }
    return d;
  }

  /** All benches seen, with their devices' counters. */
  benches(): { benchId: string; runId: string | null; devices: Record<string, DeviceCounters> }[] {
    const out = new Map<string, { benchId: string; runId: string | null; devices: Record<string, DeviceCounters> }>();
    for (const [key, d] of this.devices) {
      const [benchId, device] = key.split('\u0000') as [string, string];
      let b = out.get(benchId);
      if (!b) out.set(benchId, (b = { benchId, runId: this.runOf(benchId), devices: {} }));
      b.devices[device] = { ...d };
    }
    return [...out.values()];
  }

  /** Queue depths and delivery counters per consumer. */
  consumerStats(): { name: string; queued: number; delivered: number; highWater: number; errors: number }[] {
    return this.consumers.map((c) => ({ name: c.name, queued: c.queue.length, delivered: c.delivered, highWater: c.highWater, errors: c.errors }));
  }

  /** Resolves once every consumer queue is empty and no handler is running (tests, shutdown). */
  async drain(): Promise<void> {
    for (let i = 0; i < 1000; i++) {
      if (this.consumers.every((c) => c.queue.length === 0 && !c.busy && !c.scheduled)) return;
      await new Promise((r) => setImmediate(r));
    }
  }

  private dispatch(e: HubEntry): void {
    this.ring.push(e);
    for (const c of this.consumers) {
      c.queue.push(e);
      if (c.queue.length > c.highWater) c.highWater = c.queue.length;
      if (!c.scheduled && !c.busy) {
        c.scheduled = true;
        setImmediate(() => this.run(c));
      }
    }
  }

  private run(c: Consumer): void {
    c.scheduled = false;
    if (c.busy || c.queue.length === 0) return;
    const batch = c.queue.splice(0, c.queue.length);
    c.delivered += batch.length;
    let result: void | Promise<void>;
    try {
      result = c.handler(batch);
    } catch (error) {
      c.errors++;
      this.onConsumerError(c.name, error);
      result = undefined;
    }
    if (result && typeof (result as Promise<void>).then === 'function') {
      c.busy = true;
      (result as Promise<void>)
        .catch((error: unknown) => {
          c.errors++;
          this.onConsumerError(c.name, error);
        })
        .finally(() => {
          c.busy = false;
          if (c.queue.length && !c.scheduled) {
            c.scheduled = true;
            setImmediate(() => this.run(c));
          }
        });
    } else if (c.queue.length && !c.scheduled) {
      c.scheduled = true;
      setImmediate(() => this.run(c));
    }
  }
}
