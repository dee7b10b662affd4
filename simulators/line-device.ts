/**
 * Base of the simulated instruments: frames the host's commands, answers after a latency, and
 * misbehaves on demand (late, missing or garbled replies).
 */
import { LineFramer, type LineTerminator } from '../shared/protocol';
import { seededRng, type Rng } from '../shared/random';

/** A simulated instrument as the serial binding and the pty runner see it: bytes in, bytes out. */
export interface SimDevice {
  /** The host opened the port: send output to `sink` from now on. */
  connect(sink: (data: Uint8Array) => void): void;
  /** The host closed the port or the cable was pulled: stop all output and timers. */
  disconnect(): void;
  /** Bytes the host wrote. */
  receive(data: Uint8Array): void;
  /** Modem control lines the host set (RTS keys an RS-232 HART modem); most devices ignore them. */
  setLines?(lines: { rts?: boolean; dtr?: boolean }): void;
}

/** Faults a device can be told to show. */
export interface DeviceFaults {
  /** Extra delay before every reply, ms. Default 0. */
  lateReplyMs: number;
  /** Fraction of replies never sent, 0–1 (1: the device goes silent). Default 0. */
  dropReplies: number;
  /** Send a burst of random bytes, ended by a line terminator, before every reply. Default false. */
  garbage: boolean;
}

/** Options of a {@link LineDeviceEmulator}. */
export interface LineDeviceOptions {
  /** Reply latency, ms. Default 5 ms. */
  latencyMs?: number;
  /** Randomness for faults and noise. Default seeded with 7. */
  rng?: Rng;
}

/** Faults off. */
export const NO_FAULTS: DeviceFaults = { lateReplyMs: 0, dropReplies: 0, garbage: false };

const encoder = new TextEncoder();

export abstract class LineDeviceEmulator implements SimDevice {
  latencyMs: number;
  faults: DeviceFaults = { ...NO_FAULTS };
  protected readonly rng: Rng;
  private readonly framer: LineFramer;
  private readonly terminator: LineTerminator;
  private sink: ((data: Uint8Array) => void) | undefined;
  private readonly timers = new Set<NodeJS.Timeout>();

  protected constructor(terminator: LineTerminator, options: LineDeviceOptions) {
    this.terminator = terminator;
    this.framer = new LineFramer({ terminator, maxLineLength: 256 });
    this.latencyMs = options.latencyMs ?? 5;
    this.rng = options.rng ?? seededRng(7);
  }

  /** True while a host has the port open. */
  get connected(): boolean {
    return this.sink !== undefined;
  }

  connect(sink: (data: Uint8Array) => void): void {
    this.sink = sink;
    this.framer.reset();
    this.onConnect();
  }

  disconnect(): void {
    this.sink = undefined;
    for (const timer of this.timers) clearTimeout(timer);
    this.timers.clear();
    this.onDisconnect();
  }

  receive(data: Uint8Array): void {
    for (const line of this.framer.push(data)) {
      const reply = this.handle(line.trim());
      if (reply !== undefined) this.reply(reply);
    }
  }

  /** Sends raw bytes now, e.g. line noise. */
  injectBytes(data: Uint8Array | string): void {
    this.sink?.(typeof data === 'string' ? encoder.encode(data) : data);
  }

  /** Random bytes (never a terminator) of the given length. */
  protected noise(length: number): Uint8Array {
    const out = new Uint8Array(length);
    for (let i = 0; i < length; i += 1) {
      let b = Math.floor(this.rng() * 256);
      if (b === 0x0a || b === 0x0d) b = 0x00;
      out[i] = b;
    }
    return out;
  }

  /** Writes a line now, with the terminator, bypassing faults. */
  protected sendLine(text: string): void {
    this.injectBytes(text + this.terminator);
  }

  /** Runs `fn` after `ms` unless the device is disconnected first. */
  protected later(ms: number, fn: () => void): void {
    const timer = setTimeout(() => {
      this.timers.delete(timer);
      if (this.sink) fn();
    }, ms);
    this.timers.add(timer);
  }

  /** Handles one command line; returns the reply text, or `undefined` for no reply. */
  protected abstract handle(line: string): string | undefined;

  protected onConnect(): void {}

  protected onDisconnect(): void {}

  /** Sends an unsolicited line now, subject to the drop and garbage faults (free-running output). */
  protected emitLine(text: string): void {
    if (this.faults.dropReplies > 0 && this.rng() < this.faults.dropReplies) return;
    if (this.faults.garbage) {
      this.injectBytes(this.noise(1 + Math.floor(this.rng() * 24)));
      this.injectBytes(this.terminator);
    }
    this.sendLine(text);
  }

  private reply(text: string): void {
    this.later(this.latencyMs + this.faults.lateReplyMs, () => this.emitLine(text));
  }
}
