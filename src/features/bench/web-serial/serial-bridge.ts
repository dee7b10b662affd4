/**
 * Web Serial bridge: reads the two bench instruments directly in the browser with the shared
 * protocol code (`shared/protocol`: LineFramer + ProtocolDecoder, SCPI for the meter, the
 * calibrator's line profile) and forwards the raw lines over the live stream through the shared
 * line forwarder (numbered batches kept until the server acknowledges them as stored, and sent
 * again after a reconnect), where the bench hub decodes them again as if from its own ports. The
 * lines feed the signed-in user's own browser bench, and only runs that user performs.
 */
import { create } from 'zustand';
import {
  classifyScpiMeterLine,
  createCalibratorClassifier,
  LineForwarder,
  ProtocolDecoder,
  SCPI_COMMANDS,
  SIMCAL_PROFILE,
  type LineProtocolProfile,
} from '../../../../shared/protocol';
import type { ClientMessage, StreamMessage } from '../../../../shared/schemas/stream';

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
  /** Lines acknowledged by the server as stored. */
  forwarded: number;
  /** Lines kept until the server acknowledges them (stream down, or not yet acknowledged). */
  unsent: number;
  /** Batches the server refused, and the last reason. */
  refused: number;
  lastRefusal: string | null;
}

const emptyDevice = (baudRate: number): DeviceLinkState => ({ connected: true, baudRate, lines: 0, samples: 0, rejected: 0, lastValue: null, lastUnit: null, error: null });

/** Keeps at most this many lines waiting while the stream is down (oldest dropped). */
const MAX_PENDING = 50_000;

export interface BridgeOptions {
  benchId: string;
  /** Sends a client message on the live stream; false when it is not open. */
  send: (m: ClientMessage) => boolean;
  /** Names this tab's queue to the server. Default a random id. */
  senderId?: string;
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
  private readonly forwarder: LineForwarder;
  private flushTimer: ReturnType<typeof setInterval> | null = null;
  private readonly encoder = new TextEncoder();
  private storedLines = 0;

  constructor(private readonly opts: BridgeOptions) {
    this.state = { benchId: opts.benchId, devices: { pressure: undefined, current: undefined }, forwarded: 0, unsent: 0, refused: 0, lastRefusal: null };
    this.forwarder = new LineForwarder({
      benchId: opts.benchId,
      senderId: opts.senderId ?? `tab-${Math.random().toString(36).slice(2, 12)}`,
      maxLines: MAX_PENDING,
      send: (m) => opts.send(m),
    });
  }

  /** The live stream opened (or reopened): everything not yet acknowledged is sent again. */
  linkUp(): void {
    this.forwarder.linkUp();
    this.changed();
  }

  linkDown(): void {
    this.forwarder.linkDown();
    this.changed();
  }

  /** A stream message: acknowledgements of this bridge's batches settle them. */
  onMessage(m: StreamMessage): void {
    if (m.type !== 'lines.acked' || m.senderId !== this.forwarder.senderId) return;
    if (m.status === 'stored') this.storedLines += m.stored;
    this.forwarder.acked(m);
    this.changed();
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
      this.forwarder.push({ device, raw: raw.slice(0, 512), wallMs: now });
    }
    this.changed();
  }

  /** Seals what was read into a batch and sends what the forwarder's window allows. */
  flush(): void {
    this.forwarder.tick();
    this.changed();
  }

  private changed(): void {
    const f = this.forwarder.stats;
    this.state.forwarded = this.storedLines;
    this.state.unsent = f.queuedLines;
    this.state.refused = f.refused;
    this.state.lastRefusal = f.lastRefusal;
    this.opts.onChange?.({ ...this.state, devices: { ...this.state.devices } });
  }
}

/** What the bridge needs of the live stream. */
export interface StreamLink {
  send: (m: ClientMessage) => boolean;
  subscribe: (listener: (m: StreamMessage) => void) => () => void;
  /** Calls back with whether the stream is open, now and on every change; returns the unsubscribe. */
  watchOpen: (listener: (open: boolean) => void) => () => void;
}

interface WebSerialStore {
  bridge: SerialBridge | null;
  state: BridgeState | null;
  /** The signed-in user's browser bench (from the server; null until known). */
  benchId: string | null;
  setBenchId(benchId: string | null): void;
  ensure(link: StreamLink): SerialBridge;
  set(state: BridgeState): void;
  /** Ends the bridge's subscriptions to the stream. */
  unlink: (() => void) | null;
}

/** The page's one Web Serial bridge (kept across pages, so a run can use it). */
export const useWebSerial = create<WebSerialStore>((set, get) => ({
  bridge: null,
  state: null,
  benchId: null,
  unlink: null,
  setBenchId(benchId) {
    if (get().benchId === benchId) return;
    // Another user signed in on this page: the old bridge fed the old user's bench.
    get().unlink?.();
    void get().bridge?.close();
    set({ benchId, bridge: null, state: null, unlink: null });
  },
  ensure(link) {
    const existing = get().bridge;
    if (existing) return existing;
    const benchId = get().benchId;
    if (!benchId) throw new Error('This browser has no bench yet: sign in as a technician');
    const bridge = new SerialBridge({ benchId, send: link.send, onChange: (s) => set({ state: s }) });
    const offMessages = link.subscribe((m) => bridge.onMessage(m));
    const offOpen = link.watchOpen((open) => (open ? bridge.linkUp() : bridge.linkDown()));
    set({
      bridge,
      state: bridge.state,
      unlink: () => {
        offMessages();
        offOpen();
      },
    });
    return bridge;
  },
  set(state) {
    set({ state });
  },
}));

/** Bench id to run on when this browser's instruments are connected, else undefined. */
export function useBrowserBenchId(): string | undefined {
  return useWebSerial((s) => (s.state && s.state.devices.pressure?.connected && s.state.devices.current?.connected ? (s.benchId ?? undefined) : undefined));
}
