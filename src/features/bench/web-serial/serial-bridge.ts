/**
 * Web Serial bridge: reads the two bench instruments directly in the browser with the shared
 * protocol code (`shared/protocol`: LineFramer + ProtocolDecoder, SCPI for the meter, the
 * calibrator's line profile) and forwards batches of raw lines over the live stream
 * (`lines.forwarded`), where the bench hub decodes them again as if from its own ports.
 */
import { create } from 'zustand';
import {
  classifyScpiMeterLine,
  createCalibratorClassifier,
  ProtocolDecoder,
  SCPI_COMMANDS,
  SIMCAL_PROFILE,
  type LineProtocolProfile,
} from '../../../../shared/protocol';
import type { ClientMessage } from '../../../../shared/schemas/stream';

/** The parts of the Web Serial API we use (not in TypeScript's DOM library yet). */
export interface SerialPortLike {
  open(options: { baudRate: number; dataBits?: number; stopBits?: number; parity?: string }): Promise<void>;
  close(): Promise<void>;
  readable: ReadableStream<Uint8Array> | null;
  writable: WritableStream<Uint8Array> | null;
  getInfo?(): { usbVendorId?: number; usbProductId?: number };
}
export interface SerialLike {
  requestPort(options?: unknown): Promise<SerialPortLike>;
}

export type Device = 'pressure' | 'current';

/** The browser's Web Serial, or undefined where it has none (Firefox, Safari, insecure origins). */
export function webSerial(): SerialLike | undefined {
  const nav = typeof navigator === 'undefined' ? undefined : (navigator as Navigator & { serial?: SerialLike });
  return nav?.serial;
}

export interface DeviceLinkState {
  connected: boolean;
  baudRate: number;
  lines: number;
  samples: number;
  rejected: number;
  lastValue: number | null;
  lastUnit: string | null;
  error: string | null;
}

export interface BridgeState {
  benchId: string;
  devices: Record<Device, DeviceLinkState | undefined>;
  /** Lines sent to the server. */
  forwarded: number;
  /** Batches that could not be sent (stream down); their lines are kept and retried. */
  unsent: number;
}

const emptyDevice = (baudRate: number): DeviceLinkState => ({ connected: true, baudRate, lines: 0, samples: 0, rejected: 0, lastValue: null, lastUnit: null, error: null });

/** Keeps at most this many lines waiting while the stream is down (oldest dropped). */
const MAX_PENDING = 5_000;
/** Lines per `lines.forwarded` message (the contract allows 500). */
const BATCH = 500;

export interface BridgeOptions {
  benchId: string;
  /** Sends a client message on the live stream; false when it is not open. */
  send: (m: ClientMessage) => boolean;
  /** Calibrator protocol profile. Default the bundled simulated calibrator's. */
  profile?: LineProtocolProfile;
  /** Readings per second asked of each device. Default 10. */
  pollHz?: number;
  /** Forwarding interval, ms. Default 200 ms. */
  flushMs?: number;
  onChange?: (s: BridgeState) => void;
}

interface Link {
  port: SerialPortLike;
  reader: ReadableStreamDefaultReader<Uint8Array> | null;
  writer: WritableStreamDefaultWriter<Uint8Array> | null;
  decoder: ProtocolDecoder;
  poll: ReturnType<typeof setInterval> | null;
  closed: boolean;
}

export class SerialBridge {
  readonly state: BridgeState;
  private readonly links: Partial<Record<Device, Link>> = {};
  private pending: { device: Device; raw: string; wallMs: number }[] = [];
  private flushTimer: ReturnType<typeof setInterval> | null = null;
  private readonly encoder = new TextEncoder();

  constructor(private readonly opts: BridgeOptions) {
    this.state = { benchId: opts.benchId, devices: { pressure: undefined, current: undefined }, forwarded: 0, unsent: 0 };
  }

  /** Opens `port` for `device`, starts reading and polling. */
  async connect(device: Device, port: SerialPortLike, baudRate = 9600): Promise<void> {
    await this.disconnect(device);
    await port.open({ baudRate, dataBits: 8, stopBits: 1, parity: 'none' });
    const profile = this.opts.profile ?? SIMCAL_PROFILE;
    const decoder =
      device === 'current'
        ? new ProtocolDecoder(classifyScpiMeterLine, { terminator: '\n' })
        : new ProtocolDecoder(createCalibratorClassifier(profile), { terminator: profile.lineEnding });
    const link: Link = { port, reader: port.readable?.getReader() ?? null, writer: port.writable?.getWriter() ?? null, decoder, poll: null, closed: false };
    this.links[device] = link;
    this.state.devices[device] = emptyDevice(baudRate);
    this.changed();
    void this.readLoop(device, link);
    const command = device === 'current' ? `${SCPI_COMMANDS.read}\n` : `${profile.queryCommand}${profile.lineEnding}`;
    if (device === 'current' || profile.mode === 'query') {
      const hz = this.opts.pollHz ?? 10;
      link.poll = setInterval(() => void this.write(link, command), 1000 / hz);
    } else if (profile.streamStartCommand) void this.write(link, `${profile.streamStartCommand}${profile.lineEnding}`);
    this.flushTimer ??= setInterval(() => this.flush(), this.opts.flushMs ?? 200);
  }

  async disconnect(device: Device): Promise<void> {
    const link = this.links[device];
    if (!link) return;
    link.closed = true;
    if (link.poll) clearInterval(link.poll);
    try {
      await link.reader?.cancel();
    } catch {
      // already cancelled
    }
    link.reader?.releaseLock();
    link.writer?.releaseLock();
    try {
      await link.port.close();
    } catch {
      // the port may already be gone (cable pulled)
    }
    delete this.links[device];
    const st = this.state.devices[device];
    if (st) st.connected = false;
    this.changed();
  }

  async close(): Promise<void> {
    await Promise.all((['pressure', 'current'] as const).map((d) => this.disconnect(d)));
    this.flush();
    if (this.flushTimer) clearInterval(this.flushTimer);
    this.flushTimer = null;
  }

  private async write(link: Link, text: string): Promise<void> {
    if (link.closed || !link.writer) return;
    try {
      await link.writer.write(this.encoder.encode(text));
    } catch {
      // A failed write shows up as a closed reader; the read loop reports it.
    }
  }

  private async readLoop(device: Device, link: Link): Promise<void> {
    const reader = link.reader;
    if (!reader) return;
    try {
      for (;;) {
        const { value, done } = await reader.read();
        if (done || link.closed) break;
        if (!value) continue;
        this.ingest(device, link.decoder.push(value));
      }
    } catch (e) {
      const st = this.state.devices[device];
      if (st && !link.closed) {
        st.error = e instanceof Error ? e.message : 'read failed';
        st.connected = false;
        this.changed();
      }
    }
  }

  /** Keeps every complete line (readings and rejected ones alike: the server keeps the raw record). */
  ingest(device: Device, frames: ReturnType<ProtocolDecoder['push']>): void {
    const st = this.state.devices[device];
    if (!st || frames.length === 0) return;
    const now = Date.now();
    for (const f of frames) {
      if (f.type === 'text') continue;
      st.lines += 1;
      if (f.type === 'sample') {
        st.samples += 1;
        st.lastValue = f.sample.value;
        st.lastUnit = f.sample.unit;
      } else st.rejected += 1;
      const raw = f.type === 'sample' ? f.sample.raw : f.raw;
      this.pending.push({ device, raw: raw.slice(0, 512), wallMs: now });
    }
    if (this.pending.length > MAX_PENDING) this.pending.splice(0, this.pending.length - MAX_PENDING);
    this.changed();
  }

  /** Sends what is waiting, in batches; keeps it when the stream is not open. */
  flush(): void {
    while (this.pending.length) {
      const lines = this.pending.slice(0, BATCH);
      if (!this.opts.send({ type: 'lines.forwarded', benchId: this.opts.benchId, lines })) {
        this.state.unsent += 1;
        break;
      }
      this.pending.splice(0, lines.length);
      this.state.forwarded += lines.length;
    }
    this.changed();
  }

  private changed(): void {
    this.opts.onChange?.({ ...this.state, devices: { ...this.state.devices } });
  }
}

/** Bench id of this browser's Web Serial bench (stable for the tab). */
function browserBenchId(): string {
  return `browser-${Math.random().toString(36).slice(2, 8)}`;
}

interface WebSerialStore {
  bridge: SerialBridge | null;
  state: BridgeState | null;
  benchId: string;
  ensure(send: BridgeOptions['send']): SerialBridge;
  set(state: BridgeState): void;
}

/** The page's one Web Serial bridge (kept across pages, so a run can use it). */
export const useWebSerial = create<WebSerialStore>((set, get) => ({
  bridge: null,
  state: null,
  benchId: browserBenchId(),
  ensure(send) {
    const existing = get().bridge;
    if (existing) return existing;
    const bridge = new SerialBridge({ benchId: get().benchId, send, onChange: (s) => set({ state: s }) });
    set({ bridge, state: bridge.state });
    return bridge;
  },
  set(state) {
    set({ state });
  },
}));

/** Bench id to run on when this browser's instruments are connected, else undefined. */
export function useBrowserBenchId(): string | undefined {
  return useWebSerial((s) => (s.state && s.state.devices.pressure?.connected && s.state.devices.current?.connected ? s.benchId : undefined));
}
