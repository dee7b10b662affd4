/** What the SCPI meter and line calibrator drivers share: port wiring, parser, queue, polling, events. */
import { EventEmitter, on } from 'node:events';
import type { DecodedSample, DroppedLine, ProtocolDecoderStats, ProtocolFrame } from '../../../shared/protocol';
import type { DevicePort, PortStatusEvent } from '../transport/device-port';
import { CommandQueue, type CommandQueueStats } from './command-queue';
import { Poller } from './poller';
import type { ProtocolParser } from './protocol-parser';

/** A line that did not become a sample: dropped by the framer or rejected by the decoder. */
export interface BadLineEvent {
  path: string;
  /** Framer reason (`overlong`, `binary`, `partial`) or decoder reason (`not-a-number`, `overflow`, `no-match`, `wrong-unit`). */
  reason: string;
  /** The line as text, non-printable bytes escaped. */
  raw: string;
}

/** Events every driver emits. Names follow `'<noun>.<past-verb>'`. */
export interface DriverEvents {
  /** A decoded reading (from a poll, an explicit `read()` or a free-running device). */
  'sample.received': [DecodedSample];
  /** A line that was dropped or rejected; kept for the raw trace. */
  'line.rejected': [BadLineEvent];
  /** A `read()` made by the poller failed (timeout, bad reply, port not connected). */
  'read.failed': [Error];
  /** The port status changed; drivers re-send their set-up after `device.connected`. */
  'port.status': [PortStatusEvent];
}

/** Counters of a driver. */
export interface DriverStats {
  parser: ProtocolDecoderStats;
  queue: CommandQueueStats;
  /** Reads started by the poller that failed. */
  pollFailures: number;
}

/** Options common to every driver. */
export interface DriverOptions {
  /** Reply timeout per command, ms. Default 2000 ms. */
  timeoutMs?: number;
  /** Polling rate for {@link BenchDriver.startPolling}, readings/s. Default 10 readings/s. */
  pollRateHz?: number;
}

/** Base of the protocol drivers. Subclasses implement {@link BenchDriver.read}. */
export abstract class BenchDriver extends EventEmitter<DriverEvents> {
  readonly port: DevicePort;
  protected readonly parser: ProtocolParser;
  protected readonly queue: CommandQueue;
  private readonly poller: Poller;
  private readonly cleanup: (() => void)[] = [];
  private readonly closed = new AbortController();
  private pollFailures = 0;

  protected constructor(port: DevicePort, parser: ProtocolParser, lineEnding: string, options: DriverOptions) {
    super();
    this.port = port;
    this.parser = parser;
    this.queue = new CommandQueue(port, parser, { lineEnding, timeoutMs: options.timeoutMs ?? 2000 });
    this.poller = new Poller(() => this.read(), {
      rateHz: options.pollRateHz ?? 10,
      onError: (error) => {
        this.pollFailures += 1;
        this.emit('read.failed', error);
      },
    });
    const onFrame = (frame: ProtocolFrame): void => this.onFrame(frame);
    const onDropped = (line: DroppedLine): void => {
      this.emit('line.rejected', { path: port.path, reason: line.reason, raw: line.raw });
    };
    parser.on('data', onFrame);
    parser.on('dropped', onDropped);
    this.cleanup.push(
      () => parser.off('data', onFrame),
      () => parser.off('dropped', onDropped),
      port.onData((chunk) => parser.write(chunk)),
      port.onStatus((event) => {
        if (event.type === 'device.connected') parser.reset();
        this.emit('port.status', event);
        if (event.type === 'device.connected') this.onConnected();
      }),
    );
  }

  /** Reads one sample. */
  abstract read(): Promise<DecodedSample>;

  /** Hook run after every (re)connect; the meter re-configures, the calibrator restarts its feed. */
  protected onConnected(): void {}

  /** Frames seen by the driver; rejected frames are reported and samples may be emitted by subclasses. */
  protected onFrame(frame: ProtocolFrame): void {
    if (frame.type === 'rejected') this.emit('line.rejected', { path: this.port.path, reason: frame.reason, raw: frame.raw });
  }

  /** Starts polling `read()` at `rateHz` readings/s (default: the driver's `pollRateHz`, 10/s). */
  startPolling(rateHz?: number): void {
    this.poller.start(rateHz);
  }

  stopPolling(): void {
    this.poller.stop();
  }

  /** Samples as an async iterator, until `signal` aborts or the driver closes. */
  async *samples(signal?: AbortSignal): AsyncGenerator<DecodedSample> {
    const stop = signal ? AbortSignal.any([signal, this.closed.signal]) : this.closed.signal;
    try {
      for await (const [sample] of on(this, 'sample.received', { signal: stop })) yield sample as DecodedSample;
    } catch (error) {
      if (!stop.aborted) throw error;
    }
  }

  /** Live counters. */
  get stats(): DriverStats {
    return { parser: this.parser.stats, queue: { ...this.queue.stats }, pollFailures: this.pollFailures };
  }

  /** Stops polling, fails queued commands and detaches from the port (which stays open). */
  close(): void {
    this.poller.stop();
    this.queue.dispose();
    for (const undo of this.cleanup.splice(0)) undo();
    this.closed.abort();
  }
}
