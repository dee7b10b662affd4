/** Driver for a pressure calibrator described by a {@link LineProtocolProfile}, polled or free-running. */
import { createCalibratorClassifier, type DecodedSample, type LineProtocolProfile, type ProtocolFrame } from '../../../../shared/protocol';
import type { DevicePort } from '../../transport/device-port';
import { PortUnavailableError } from '../command-queue';
import { BenchDriver, type DriverOptions } from '../driver-base';
import { ProtocolParser } from '../protocol-parser';

/** Options of {@link LineCalibratorDriver}. */
export interface LineCalibratorDriverOptions extends DriverOptions {
  /** Longest line accepted, bytes. Default 256 bytes. */
  maxLineLength?: number;
}

interface Waiter {
  resolve: (sample: DecodedSample) => void;
  reject: (error: Error) => void;
  timer: NodeJS.Timeout;
}

/**
 * Pressure calibrator over a configurable line protocol. In `query` mode `read()` sends the
 * profile's query command and the poller drives the rate. In `stream` mode the device talks on its
 * own: every matching line is a `sample.received` event, `read()` waits for the next one, and
 * `startFeed()` (also re-run after every reconnect once called) sends the profile's start command.
 */
export class LineCalibratorDriver extends BenchDriver {
  readonly profile: LineProtocolProfile;
  private readonly timeoutMs: number;
  private readonly waiters = new Set<Waiter>();
  private feeding = false;

  constructor(port: DevicePort, profile: LineProtocolProfile, options: LineCalibratorDriverOptions = {}) {
    const framing = {
      terminator: profile.lineEnding,
      maxLineLength: options.maxLineLength ?? 256,
      // A free-running device may be mid-line when the port opens; its tail would decode as a wrong value.
      syncOnFirstTerminator: profile.mode === 'stream',
    };
    super(port, new ProtocolParser(createCalibratorClassifier(profile), framing), profile.lineEnding, options);
    this.profile = profile;
    this.timeoutMs = options.timeoutMs ?? 2000;
  }

  /** Starts the device's free-running output (`stream` mode; no-op without a start command). */
  async startFeed(): Promise<void> {
    this.feeding = true;
    if (this.profile.streamStartCommand) await this.queue.send(this.profile.streamStartCommand, { expect: 'none' });
  }

  /** Stops the free-running output. */
  async stopFeed(): Promise<void> {
    this.feeding = false;
    if (this.profile.streamStopCommand) await this.queue.send(this.profile.streamStopCommand, { expect: 'none' });
  }

  /** One reading in the profile's unit: queried, or the next free-running line. */
  async read(): Promise<DecodedSample> {
    if (this.profile.mode === 'stream') return this.nextStreamed();
    const frame = await this.queue.send(this.profile.queryCommand, { expect: 'sample' });
    if (frame?.type !== 'sample') throw new Error(`${this.profile.queryCommand} on ${this.port.path}: no sample`);
    this.emit('sample.received', frame.sample);
    return frame.sample;
  }

  override startPolling(rateHz?: number): void {
    // A free-running device paces itself; polling would only wait for its lines.
    if (this.profile.mode === 'query') super.startPolling(rateHz);
  }

  override close(): void {
    this.failWaiters('driver closed');
    super.close();
  }

  protected override onFrame(frame: ProtocolFrame): void {
    super.onFrame(frame);
    if (this.profile.mode !== 'stream' || frame.type !== 'sample') return;
    this.emit('sample.received', frame.sample);
    for (const waiter of this.waiters) {
      clearTimeout(waiter.timer);
      waiter.resolve(frame.sample);
    }
    this.waiters.clear();
  }

  protected override onConnected(): void {
    if (this.feeding) this.startFeed().catch((error: Error) => this.emit('read.failed', error));
  }

  private nextStreamed(): Promise<DecodedSample> {
    const what = `${this.profile.id} line`;
    if (!this.port.connected) return Promise.reject(new PortUnavailableError(what, this.port.path, 'port not connected'));
    return new Promise((resolve, reject) => {
      const waiter: Waiter = {
        resolve,
        reject,
        timer: setTimeout(() => {
          this.waiters.delete(waiter);
          reject(new Error(`${what} on ${this.port.path}: no reply in ${this.timeoutMs} ms`));
        }, this.timeoutMs),
      };
      this.waiters.add(waiter);
    });
  }

  private failWaiters(reason: string): void {
    for (const waiter of this.waiters) {
      clearTimeout(waiter.timer);
      waiter.reject(new PortUnavailableError(`${this.profile.id} line`, this.port.path, reason));
    }
    this.waiters.clear();
  }
}
