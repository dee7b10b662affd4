/**
 * A serial port that stays wanted: opens through an injected binding, reports disconnects and
 * reopens with capped exponential backoff until closed.
 */
import { EventEmitter } from 'node:events';
import { SerialPortStream } from '@serialport/stream';
import type { BindingInterface, OpenOptions } from './binding-types';
import type { DeviceConnectedEvent, DeviceDisconnectedEvent, DevicePort, PortStatusEvent } from './device-port';
import { backoffDelay } from '../../../shared/backoff';

/** Backoff between reopen attempts. */
export interface ReconnectOptions {
  /** First delay after a disconnect or failed open, ms. Default 100 ms. */
  initialDelayMs?: number;
  /** Largest delay, ms. Default 1000 ms. */
  maxDelayMs?: number;
  /** Growth per failed attempt. Default 2. */
  factor?: number;
}

/** Options of {@link openPort}. */
export interface OpenPortOptions {
  /** Device path, e.g. `/dev/ttyUSB0`, `/dev/serial/by-id/...`, or a simulator path. */
  path: string;
  /** Line speed in baud. Default 9600. */
  baudRate?: number;
  /** The binding: `defaultBinding()` for real ports, or the simulator's binding. */
  binding: BindingInterface;
  /** Other line settings passed to the binding (data bits, parity, stop bits, flow control). */
  lineSettings?: Omit<Partial<OpenOptions>, 'path' | 'baudRate'>;
  /** Reconnect policy, or `false` to stay closed after a disconnect. Default: 100 ms doubling to 1 s. */
  reconnect?: ReconnectOptions | false;
  /** Clock for event timestamps, ms since the epoch. Default `Date.now`. */
  now?: () => number;
}

/** A failed open attempt; the port will retry after `retryInMs` unless reconnect is off. */
export interface OpenFailedEvent {
  path: string;
  attempt: number;
  error: string;
  /** Delay before the next attempt in ms, or `undefined` when no retry is scheduled. */
  retryInMs: number | undefined;
}

/** Events of a {@link ManagedPort}. */
export interface ManagedPortEvents {
  'device.connected': [DeviceConnectedEvent];
  'device.disconnected': [DeviceDisconnectedEvent];
  'open.failed': [OpenFailedEvent];
  data: [Uint8Array];
}

/** Lifecycle of a {@link ManagedPort}. */
export type ManagedPortState = 'idle' | 'opening' | 'connected' | 'waiting' | 'closed';

const DEFAULT_RECONNECT: Required<ReconnectOptions> = { initialDelayMs: 100, maxDelayMs: 1000, factor: 2 };

/**
 * Owns one `SerialPortStream` at a time. A fresh stream is created for every (re)connect because a
 * stream whose write failed is destroyed for good. Errors never escape as `'error'` events: they
 * become `device.disconnected` / `open.failed` events.
 */
export class ManagedPort extends EventEmitter<ManagedPortEvents> implements DevicePort {
  readonly path: string;
  private readonly options: OpenPortOptions;
  private readonly backoff: Required<ReconnectOptions> | undefined;
  private readonly now: () => number;
  private stream: SerialPortStream | undefined;
  private timer: NodeJS.Timeout | undefined;
  private failures = 0;
  private connections = 0;
  private lostAt: number | undefined;
  private firstConnect: { resolve: () => void; reject: (e: Error) => void } | undefined;
  private _state: ManagedPortState = 'idle';

  constructor(options: OpenPortOptions) {
    super();
    this.options = options;
    this.path = options.path;
    this.backoff = options.reconnect === false ? undefined : { ...DEFAULT_RECONNECT, ...options.reconnect };
    this.now = options.now ?? Date.now;
  }

  /** Current lifecycle state. */
  get state(): ManagedPortState {
    return this._state;
  }

  get connected(): boolean {
    return this._state === 'connected';
  }

  /**
   * Starts opening. Resolves at the first successful open; with reconnect on, failed opens are
   * retried (reported as `open.failed`) until one succeeds or {@link close} is called, which rejects.
   */
  open(): Promise<void> {
    if (this._state === 'connected') return Promise.resolve();
    if (this._state === 'closed') return Promise.reject(new Error(`open on ${this.path}: port was closed`));
    const pending = new Promise<void>((resolve, reject) => {
      const previous = this.firstConnect;
      this.firstConnect = {
        resolve: () => (previous?.resolve(), resolve()),
        reject: (e) => (previous?.reject(e), reject(e)),
      };
    });
    if (this._state === 'idle') this.attempt();
    return pending;
  }

  write(data: string | Uint8Array): Promise<void> {
    const stream = this.stream;
    if (!stream || this._state !== 'connected') return Promise.reject(new Error(`write on ${this.path}: port not connected`));
    return new Promise((resolve, reject) => {
      stream.write(typeof data === 'string' ? data : Buffer.from(data), (error) => (error ? reject(error) : resolve()));
    });
  }

  setControlLines(lines: { rts?: boolean; dtr?: boolean }): Promise<void> {
    const stream = this.stream;
    if (!stream || this._state !== 'connected') return Promise.reject(new Error(`set control lines on ${this.path}: port not connected`));
    return new Promise((resolve, reject) => stream.set(lines, (error) => (error ? reject(error) : resolve())));
  }

  onData(listener: (chunk: Uint8Array) => void): () => void {
    this.on('data', listener);
    return () => this.off('data', listener);
  }

  onStatus(listener: (event: PortStatusEvent) => void): () => void {
    const connected = (e: DeviceConnectedEvent): void => listener({ type: 'device.connected', ...e });
    const disconnected = (e: DeviceDisconnectedEvent): void => listener({ type: 'device.disconnected', ...e });
    this.on('device.connected', connected);
    this.on('device.disconnected', disconnected);
    return () => {
      this.off('device.connected', connected);
      this.off('device.disconnected', disconnected);
    };
  }

  /** Closes the port for good: cancels any retry and closes the stream. Idempotent. */
  async close(): Promise<void> {
    if (this._state === 'closed') return;
    const wasConnected = this._state === 'connected';
    this._state = 'closed';
    clearTimeout(this.timer);
    this.firstConnect?.reject(new Error(`open on ${this.path}: port closed before it connected`));
    this.firstConnect = undefined;
    const stream = this.stream;
    this.stream = undefined;
    if (stream) await closeQuietly(stream);
    if (wasConnected) this.emit('device.disconnected', { path: this.path, at: this.now(), reason: 'closed' });
  }

  private attempt(): void {
    if (this._state === 'closed') return;
    this._state = 'opening';
    const stream = new SerialPortStream({
      ...this.options.lineSettings,
      binding: this.options.binding,
      path: this.path,
      baudRate: this.options.baudRate ?? 9600,
      autoOpen: false,
    });
    // Errors are reported through our events; a stream must never emit an unhandled 'error'.
    stream.on('error', (error) => this.lost(stream, error));
    stream.on('close', (error?: Error | null) => this.lost(stream, error ?? new Error('port closed')));
    stream.on('data', (chunk: Buffer) => {
      if (this.stream === stream) this.emit('data', chunk);
    });
    stream.open((error) => {
      if (this._state === 'closed') {
        if (!error) void closeQuietly(stream);
        return;
      }
      if (error) {
        this.failures += 1;
        const retryInMs = this.nextDelay();
        this.emit('open.failed', { path: this.path, attempt: this.failures, error: error.message, retryInMs });
        if (retryInMs === undefined) {
          this._state = 'closed';
          this.firstConnect?.reject(new Error(`open on ${this.path}: ${error.message}`));
          this.firstConnect = undefined;
          return;
        }
        this.schedule(retryInMs);
        return;
      }
      this.stream = stream;
      this._state = 'connected';
      this.failures = 0;
      this.connections += 1;
      const at = this.now();
      const event: DeviceConnectedEvent = { path: this.path, at, connection: this.connections };
      if (this.lostAt !== undefined) event.downtimeMs = at - this.lostAt;
      this.lostAt = undefined;
      this.firstConnect?.resolve();
      this.firstConnect = undefined;
      this.emit('device.connected', event);
    });
  }

  private lost(stream: SerialPortStream, error: Error): void {
    if (this.stream !== stream || this._state !== 'connected') return;
    this.stream = undefined;
    void closeQuietly(stream);
    this.lostAt = this.now();
    this.emit('device.disconnected', { path: this.path, at: this.lostAt, reason: error.message });
    const delay = this.nextDelay(true);
    if (delay === undefined) {
      this._state = 'closed';
      return;
    }
    this.schedule(delay);
  }

  private nextDelay(first = false): number | undefined {
    if (!this.backoff) return undefined;
    const { initialDelayMs, maxDelayMs, factor } = this.backoff;
    return backoffDelay(first ? 1 : this.failures, { initialMs: initialDelayMs, maxMs: maxDelayMs, factor });
  }

  private schedule(delayMs: number): void {
    if (this._state === 'closed') return;
    this._state = 'waiting';
    clearTimeout(this.timer);
    this.timer = setTimeout(() => this.attempt(), delayMs);
  }
}

/** Closes a stream if it is open and swallows every error: used on ports we are abandoning. */
function closeQuietly(stream: SerialPortStream): Promise<void> {
  stream.removeAllListeners('data');
  if (stream.listenerCount('error') === 0) stream.on('error', () => {});
  if (!stream.isOpen) {
    stream.destroy();
    return Promise.resolve();
  }
  return new Promise((resolve) => {
    stream.close(() => {
      stream.destroy();
      resolve();
    });
  });
}

/** Creates a {@link ManagedPort} and starts opening it; await `port.open()` for the first connection. */
export function openPort(options: OpenPortOptions): ManagedPort {
  const port = new ManagedPort(options);
  port.open().catch(() => {
    // The caller observes failures through `open()` or `open.failed`; this start must not leave an unhandled rejection.
  });
  return port;
}
