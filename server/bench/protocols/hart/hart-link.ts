/**
 * The master's side of the HART data link on one port: one outstanding request at a time, first in
 * first out; each attempt waits a named time for the matching reply; timeouts, damaged replies and
 * communication errors are retried, busy answers are retried after a pause. An RS-232 modem is keyed
 * with RTS for exactly the time the request takes on the wire.
 */
import { encodeHartFrame, HartFrameDecoder, hartRequest, isCommunicationError, sameDevice, type HartAddress, type HartFrame } from '../../../../shared/protocol/hart';
import type { DevicePort } from '../../transport/device-port';
import { HartBusyError, HartChecksumError, HartCommunicationError, HartPortError, HartTimeoutError } from './hart-errors';

/** How the modem is switched to transmit: `'usb'` modems do it themselves, `'rts'` modems need RTS raised. */
export type HartModemType = 'usb' | 'rts';

/** Options of {@link HartLink}. */
export interface HartLinkOptions {
  /** Wait for a reply per attempt, ms, counted from the end of the request on the wire. Default 1000 ms. */
  timeoutMs?: number;
  /** Further attempts after a timeout, a damaged reply or a communication error. Default 2. */
  retries?: number;
  /** Further attempts after "busy" (32) or a running delayed response (33, 34). Default 5. */
  busyRetries?: number;
  /** Pause before re-asking a busy device, ms. Default 100 ms. */
  busyDelayMs?: number;
  /** Default `'usb'`. */
  modem?: HartModemType;
  /** Preambles before each request. Default 5. */
  preambles?: number;
  /** Line speed for the wire time of a request, bit/s. Default 1200 (11 bits a byte, 8O1). */
  baudRate?: number;
}

/** Counters of a {@link HartLink}. */
export interface HartLinkStats {
  /** Requests put on the wire (every attempt). */
  sent: number;
  /** Replies matched to a request. */
  replied: number;
  retries: number;
  timeouts: number;
  checksumErrors: number;
  busy: number;
  communicationErrors: number;
  garbageBytes: number;
}

/** A finished transaction: the request and reply frames as bytes, and the reply. */
export interface HartExchange {
  request: Uint8Array;
  reply: Uint8Array;
  frame: HartFrame;
  attempts: number;
}

type Outcome =
  | { type: 'frame'; frame: HartFrame; raw: Uint8Array }
  | { type: 'bad-checksum'; command: number; address: HartAddress }
  | { type: 'timeout' }
  | { type: 'port'; reason: string };

const sleep = (ms: number): Promise<void> => new Promise((r) => setTimeout(r, ms));

export class HartLink {
  readonly stats: HartLinkStats = { sent: 0, replied: 0, retries: 0, timeouts: 0, checksumErrors: 0, busy: 0, communicationErrors: 0, garbageBytes: 0 };
  private readonly decoder = new HartFrameDecoder();
  private readonly o: Required<HartLinkOptions>;
  private tail: Promise<unknown> = Promise.resolve();
  private waiter: ((outcome: Outcome) => void) | undefined;
  private readonly cleanup: (() => void)[] = [];
  private closed = false;

  constructor(
    readonly port: DevicePort,
    options: HartLinkOptions = {},
  ) {
    this.o = { timeoutMs: 1000, retries: 2, busyRetries: 5, busyDelayMs: 100, modem: 'usb', preambles: 5, baudRate: 1200, ...options };
    this.cleanup.push(
      port.onData((chunk) => this.onBytes(chunk)),
      port.onStatus((event) => {
        this.decoder.reset();
        if (event.type === 'device.disconnected') this.waiter?.({ type: 'port', reason: 'port disconnected' });
      }),
    );
  }

  /** The modem type in use. */
  get modem(): HartModemType {
    return this.o.modem;
  }

  /**
   * Sends one request and resolves with the matching reply (any response code but busy). Rejects
   * with {@link HartTimeoutError}, {@link HartChecksumError}, {@link HartCommunicationError},
   * {@link HartBusyError} or {@link HartPortError}.
   */
  transact(address: HartAddress, command: number, data: Uint8Array, timeoutMs = this.o.timeoutMs): Promise<HartExchange> {
    const run = (): Promise<HartExchange> => this.run(address, command, data, timeoutMs);
    const result = this.tail.then(run, run);
    this.tail = result.catch(() => undefined);
    return result;
  }

  /** Stops listening; a waiting request fails and queued ones fail when their turn comes. */
  close(): void {
    this.closed = true;
    this.waiter?.({ type: 'port', reason: 'driver closed' });
    for (const undo of this.cleanup.splice(0)) undo();
  }

  private onBytes(chunk: Uint8Array): void {
    for (const event of this.decoder.push(chunk)) {
      // Requests are our own echo (half-duplex modems may echo): never a reply.
      if (event.type === 'garbage') this.stats.garbageBytes += event.bytes.length;
      else if (event.type === 'frame') {
        if (event.frame.kind !== 'request') this.waiter?.({ type: 'frame', frame: event.frame, raw: event.raw });
      } else if (event.kind !== 'request') this.waiter?.({ type: 'bad-checksum', command: event.command, address: event.address });
    }
  }

  private async run(address: HartAddress, command: number, data: Uint8Array, timeoutMs: number): Promise<HartExchange> {
    const path = this.port.path;
    const request = encodeHartFrame(hartRequest(address, command, data), { preambles: this.o.preambles });
    let failures = 0;
    let busy = 0;
    let last: Outcome | undefined;
    let lastCode = 0;
    for (let attempt = 1; ; attempt += 1) {
      if (this.closed) throw new HartPortError(command, path, 'driver closed');
      if (!this.port.connected) throw new HartPortError(command, path, 'port not connected');
      if (attempt > 1) this.stats.retries += 1;
      const outcome = await this.attempt(address, command, request, timeoutMs);
      if (outcome.type === 'port') throw new HartPortError(command, path, outcome.reason);
      if (outcome.type === 'frame') {
        this.stats.replied += 1;
        const code = outcome.frame.status?.responseCode ?? 0;
        if (isCommunicationError(code)) {
          this.stats.communicationErrors += 1;
          lastCode = code;
        } else if (code === 32 || code === 33 || code === 34) {
          this.stats.busy += 1;
          if (busy >= this.o.busyRetries) throw new HartBusyError(command, path, code, outcome.frame.status?.deviceStatus ?? 0);
          busy += 1;
          await sleep(this.o.busyDelayMs);
          continue;
        } else {
          return { request, reply: outcome.raw, frame: outcome.frame, attempts: attempt };
        }
      } else if (outcome.type === 'timeout') this.stats.timeouts += 1;
      else this.stats.checksumErrors += 1;
      last = outcome;
      failures += 1;
      if (failures > this.o.retries) break;
    }
    if (last?.type === 'bad-checksum') throw new HartChecksumError(command, path, failures);
    if (last?.type === 'timeout') throw new HartTimeoutError(command, path, timeoutMs, failures);
    throw new HartCommunicationError(command, path, lastCode);
  }

  /** One request on the wire and the wait for its reply. */
  private async attempt(address: HartAddress, command: number, request: Uint8Array, timeoutMs: number): Promise<Outcome> {
    const reply = new Promise<Outcome>((resolve) => {
      this.waiter = (outcome) => {
        // Only a reply to this command from this device to this master answers it (a damaged one counts as an answer).
        const head = outcome.type === 'frame' ? { command: outcome.frame.command, address: outcome.frame.address } : outcome.type === 'bad-checksum' ? outcome : undefined;
        if (head && !(head.command === command && sameDevice(head.address, address) && head.address.master === address.master)) return;
        this.waiter = undefined;
        resolve(outcome);
      };
    });
    const wireMs = (request.length * 11 * 1000) / this.o.baudRate;
    try {
      if (this.o.modem === 'rts') await this.key(true);
      await this.port.write(request);
      this.stats.sent += 1;
      // An RS-232 modem sends while RTS is high: hold it for the request's time on the wire, then listen.
      if (this.o.modem === 'rts') {
        await sleep(wireMs);
        await this.key(false);
      }
    } catch (error) {
      this.waiter = undefined;
      return { type: 'port', reason: error instanceof Error ? error.message : String(error) };
    }
    let timer: NodeJS.Timeout | undefined;
    const timeout = new Promise<Outcome>((resolve) => (timer = setTimeout(() => resolve({ type: 'timeout' }), timeoutMs)));
    const outcome = await Promise.race([reply, timeout]);
    clearTimeout(timer);
    this.waiter = undefined;
    return outcome;
  }

  private async key(on: boolean): Promise<void> {
    if (!this.port.setControlLines) throw new Error(`RTS keying on ${this.port.path}: this port cannot set RTS`);
    try {
      await this.port.setControlLines({ rts: on });
    } catch (error) {
      throw new Error(`RTS keying on ${this.port.path} failed: ${error instanceof Error ? error.message : String(error)}`, { cause: error });
    }
  }
}
