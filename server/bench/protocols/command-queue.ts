/**
 * One outstanding command per port, first in first out, each with its own timeout. The timeout
 * message names the command, the port and the time: `READ? on /dev/ttyUSB0: no reply in 2000 ms`.
 */
import type { ProtocolFrame } from '../../../shared/protocol';
import type { DevicePort } from '../transport/device-port';
import type { ProtocolParser } from './protocol-parser';

/** What reply a command waits for. */
export type ReplyKind = 'sample' | 'text' | 'none';

/** Options of one command. */
export interface CommandOptions {
  /** Reply to wait for; `'none'` resolves once the command is written. */
  expect: ReplyKind;
  /** Time to wait for the reply, ms. Default: the queue's default (2000 ms). */
  timeoutMs?: number;
}

/** A command got no reply in time. */
export class CommandTimeoutError extends Error {
  readonly code = 'command-timeout';
  constructor(
    readonly command: string,
    readonly path: string,
    readonly timeoutMs: number,
  ) {
    super(`${command} on ${path}: no reply in ${timeoutMs} ms`);
    this.name = 'CommandTimeoutError';
  }
}

/** A command was answered with a line that could not be decoded. */
export class BadReplyError extends Error {
  readonly code = 'bad-reply';
  constructor(
    readonly command: string,
    readonly path: string,
    readonly frame: Extract<ProtocolFrame, { type: 'rejected' }>,
  ) {
    super(`${command} on ${path}: bad reply ${JSON.stringify(frame.raw.slice(0, 40))} (${frame.reason})`);
    this.name = 'BadReplyError';
  }
}

/** A command could not be sent or was cut off because the port is not connected. */
export class PortUnavailableError extends Error {
  readonly code = 'port-unavailable';
  constructor(
    readonly command: string,
    readonly path: string,
    reason: string,
  ) {
    super(`${command} on ${path}: ${reason}`);
    this.name = 'PortUnavailableError';
  }
}

/** Counters of a {@link CommandQueue}. */
export interface CommandQueueStats {
  sent: number;
  replied: number;
  timeouts: number;
  badReplies: number;
  /** Frames that arrived with no command waiting, or of the wrong kind; discarded. */
  unsolicited: number;
}

/** Options of {@link CommandQueue}. */
export interface CommandQueueOptions {
  /** Terminator appended to every command. Default `'\n'`. */
  lineEnding?: string;
  /** Default reply timeout, ms. Default 2000 ms. */
  timeoutMs?: number;
}

interface Pending {
  command: string;
  options: CommandOptions;
  resolve: (frame: ProtocolFrame | undefined) => void;
  reject: (error: Error) => void;
}

/**
 * Serialises commands to one port and matches replies from its parser. A reply of the wrong kind
 * is discarded while waiting (the device may still be finishing an earlier answer); a rejected
 * frame answers a command that waits for a sample, with a {@link BadReplyError}. A disconnect
 * fails the waiting and queued commands at once.
 */
export class CommandQueue {
  private readonly port: DevicePort;
  private readonly lineEnding: string;
  private readonly timeoutMs: number;
  private readonly queue: Pending[] = [];
  private current: (Pending & { timer?: NodeJS.Timeout }) | undefined;
  private readonly unsubscribe: () => void;
  private readonly onFrame = (frame: ProtocolFrame): void => this.frame(frame);
  private readonly parser: ProtocolParser;
  readonly stats: CommandQueueStats = { sent: 0, replied: 0, timeouts: 0, badReplies: 0, unsolicited: 0 };

  constructor(port: DevicePort, parser: ProtocolParser, options: CommandQueueOptions = {}) {
    this.port = port;
    this.parser = parser;
    this.lineEnding = options.lineEnding ?? '\n';
    this.timeoutMs = options.timeoutMs ?? 2000;
    parser.on('data', this.onFrame);
    this.unsubscribe = port.onStatus((event) => {
      if (event.type === 'device.disconnected') this.failAll('port disconnected');
    });
  }

  /** Commands waiting, including the one in flight. */
  get depth(): number {
    return this.queue.length + (this.current ? 1 : 0);
  }

  /**
   * Queues a command. Resolves with the reply frame (`undefined` for `expect: 'none'`); rejects
   * with {@link CommandTimeoutError}, {@link BadReplyError} or {@link PortUnavailableError}.
   */
  send(command: string, options: CommandOptions): Promise<ProtocolFrame | undefined> {
    return new Promise((resolve, reject) => {
      if (!this.port.connected) {
        reject(new PortUnavailableError(command, this.port.path, 'port not connected'));
        return;
      }
      this.queue.push({ command, options, resolve, reject });
      this.next();
    });
  }

  /** Fails everything queued and stops listening. The port itself is left alone. */
  dispose(): void {
    this.failAll('driver closed');
    this.parser.off('data', this.onFrame);
    this.unsubscribe();
  }

  private next(): void {
    if (this.current) return;
    const job = this.queue.shift();
    if (!job) return;
    const current: Pending & { timer?: NodeJS.Timeout } = job;
    this.current = current;
    this.stats.sent += 1;
    const timeoutMs = job.options.timeoutMs ?? this.timeoutMs;
    if (job.options.expect !== 'none') {
      current.timer = setTimeout(() => {
        if (this.current !== current) return;
        this.stats.timeouts += 1;
        this.finish(current, () => current.reject(new CommandTimeoutError(job.command, this.port.path, timeoutMs)));
      }, timeoutMs);
    }
    this.port.write(job.command + this.lineEnding).then(
      () => {
        if (job.options.expect === 'none' && this.current === current) this.finish(current, () => current.resolve(undefined));
      },
      (error: Error) => {
        if (this.current !== current) return;
        this.finish(current, () => current.reject(new PortUnavailableError(job.command, this.port.path, `write failed: ${error.message}`)));
      },
    );
  }

  private frame(frame: ProtocolFrame): void {
    const current = this.current;
    const expect = current?.options.expect;
    if (!current || expect === 'none') {
      this.stats.unsolicited += 1;
      return;
    }
    if (frame.type === expect) {
      this.stats.replied += 1;
      this.finish(current, () => current.resolve(frame));
    } else if (frame.type === 'rejected' && expect === 'sample') {
      this.stats.badReplies += 1;
      this.finish(current, () => current.reject(new BadReplyError(current.command, this.port.path, frame)));
    } else {
      this.stats.unsolicited += 1;
    }
  }

  private finish(job: Pending & { timer?: NodeJS.Timeout }, settle: () => void): void {
    clearTimeout(job.timer);
    this.current = undefined;
    settle();
    this.next();
  }

  private failAll(reason: string): void {
    const jobs = [...(this.current ? [this.current] : []), ...this.queue.splice(0)];
    if (this.current) clearTimeout(this.current.timer);
    this.current = undefined;
    for (const job of jobs) job.reject(new PortUnavailableError(job.command, this.port.path, reason));
  }
}
