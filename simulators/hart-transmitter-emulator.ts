/**
 * A simulated HART field device on the serial line: hears request frames, answers those addressed
 * to it after a realistic delay, and misbehaves on demand (no answer, damaged checksums, busy).
 */
import { encodeHartFrame, HartFrameDecoder, hartResponse, sameDevice, uniqueIdOf, type HartAddress, type HartFrame } from '../shared/protocol/hart';
import { seededRng, type Rng } from '../shared/random';
import { answerHartCommand, DEFAULT_HART_CONFIG, deviceStatus, type HartDeviceConfig, type HartDeviceState, type HartTransmitterLink } from './hart-device-commands';
import type { SimDevice } from './line-device';

/** Faults of the simulated HART device; all off by default. */
export interface HartFaults {
  /** Fraction of requests never answered, 0–1 (1: silent). */
  noAnswer: number;
  /** Fraction of answers sent with a wrong checksum, 0–1. */
  checksumErrors: number;
  /** Answer every command with response code 32, busy. */
  busy: boolean;
  /** Extra delay before every answer, ms. */
  lateReplyMs: number;
  /** Random bytes before every answer. */
  garbage: boolean;
}

export const NO_HART_FAULTS: HartFaults = { noAnswer: 0, checksumErrors: 0, busy: false, lateReplyMs: 0, garbage: false };

/** Options of {@link HartTransmitterEmulator}. */
export interface HartEmulatorOptions {
  link: HartTransmitterLink;
  config?: Partial<HartDeviceConfig>;
  /**
   * Time from the end of a request to the start of the answer, ms. Default 30 ms (a simulator
   * choice within the slave time-out of HCF_SPEC-081, remembered as about 256 ms).
   */
  turnaroundMs?: number;
  /** Add the answer's time on the wire at 1200 bit/s, 11 bits a byte (8O1). Default true. */
  wireTime?: boolean;
  /** Hear requests only while the host holds RTS (an RS-232 modem keyed by RTS). Default false. */
  needsRts?: boolean;
  rng?: Rng;
}

/** Time one byte takes at 1200 bit/s with start, 8 data, parity and stop bits: 11 bits. */
export const HART_BYTE_MS = (11 / 1200) * 1000;

export class HartTransmitterEmulator implements SimDevice {
  faults: HartFaults = { ...NO_HART_FAULTS };
  /** Hear requests only while the host holds RTS (an RS-232 modem keyed by RTS). */
  needsRts: boolean;
  readonly state: HartDeviceState;
  /** Requests heard and answers sent, for tests. */
  readonly counts = { requests: 0, answers: 0, ignored: 0 };
  private readonly decoder = new HartFrameDecoder();
  private readonly timers = new Set<NodeJS.Timeout>();
  private readonly rng: Rng;
  private sink: ((data: Uint8Array) => void) | undefined;
  private rts = false;

  constructor(private readonly options: HartEmulatorOptions) {
    this.state = { config: { ...DEFAULT_HART_CONFIG, ...options.config }, configChanged: false, coldStart: true, configChangeCounter: 0, sensorTempC: 21.5 };
    this.rng = options.rng ?? seededRng(11);
    this.needsRts = options.needsRts ?? false;
  }

  /** The rig's transmitter as this device sees it. */
  get link(): HartTransmitterLink {
    return this.options.link;
  }

  /** The device's long address (command 0's unique identifier). */
  get uniqueId(): Uint8Array {
    return uniqueIdOf(this.state.config);
  }

  connect(sink: (data: Uint8Array) => void): void {
    this.sink = sink;
    this.decoder.reset();
  }

  disconnect(): void {
    this.sink = undefined;
    for (const timer of this.timers) clearTimeout(timer);
    this.timers.clear();
  }

  /** Modem control lines from the host (the simulator binding passes `set()` calls here). */
  setLines(lines: { rts?: boolean }): void {
    if (lines.rts !== undefined) this.rts = lines.rts;
  }

  receive(data: Uint8Array): void {
    // Without carrier (RTS low on an RTS-keyed modem) the device hears nothing.
    if (this.needsRts && !this.rts) return;
    for (const event of this.decoder.push(data)) {
      if (event.type !== 'frame' || event.frame.kind !== 'request') continue;
      this.counts.requests += 1;
      this.handle(event.frame);
    }
  }

  private addressedToUs(address: HartAddress, command: number): boolean {
    // Revision 6 and later devices take only command 0 with a polling address (from memory of HCF_SPEC-081/-127).
    if (address.type === 'short') return command === 0 && address.pollingAddress === this.state.config.pollingAddress;
    return sameDevice(address, { type: 'long', master: address.master, burst: false, uniqueId: this.uniqueId });
  }

  private handle(request: HartFrame): void {
    if (!this.addressedToUs(request.address, request.command)) {
      this.counts.ignored += 1;
      return;
    }
    if (this.faults.noAnswer > 0 && this.rng() < this.faults.noAnswer) return;
    const answer = this.faults.busy ? { responseCode: 32, data: new Uint8Array(0) } : answerHartCommand(this.state, this.options.link, request.command, request.data);
    const status = deviceStatus(this.state, this.options.link, this.options.link.read());
    // Cold start is reported once, in the first answer to a primary master (from memory).
    if (request.address.master === 'primary') this.state.coldStart = false;
    const address: HartAddress = { ...request.address, burst: false };
    const bytes = encodeHartFrame(hartResponse(address, request.command, { responseCode: answer.responseCode, deviceStatus: status }, answer.data));
    const wire = this.options.wireTime === false ? 0 : bytes.length * HART_BYTE_MS;
    const delay = (this.options.turnaroundMs ?? 30) + wire + this.faults.lateReplyMs;
    const timer = setTimeout(() => {
      this.timers.delete(timer);
      if (!this.sink) return;
      if (this.faults.garbage) this.sink(Uint8Array.from({ length: 1 + Math.floor(this.rng() * 16) }, () => Math.floor(this.rng() * 255)));
      // Damaged on the way out (line noise), so the fault acts on what is sent from now on.
      if (this.faults.checksumErrors > 0 && this.rng() < this.faults.checksumErrors) bytes[bytes.length - 1] = (bytes[bytes.length - 1] ?? 0) ^ 0x5a;
      this.sink(bytes);
      this.counts.answers += 1;
    }, delay);
    this.timers.add(timer);
  }
}
