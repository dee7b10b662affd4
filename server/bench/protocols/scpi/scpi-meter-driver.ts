/** Driver for a current meter that speaks SCPI (IEEE 488.2 common commands, SCPI measurement commands). */
import { classifyScpiMeterLine, parseIdentity, SCPI_COMMANDS, type DecodedSample, type ScpiIdentity } from '../../../../shared/protocol';
import type { DevicePort } from '../../transport/device-port';
import { BenchDriver, type DriverOptions } from '../driver-base';
import { ProtocolParser } from '../protocol-parser';

/** Options of {@link ScpiMeterDriver}. */
export interface ScpiMeterDriverOptions extends DriverOptions {
  /** Line terminator both ways. Default `'\n'` (IEEE 488.2 NL). */
  lineEnding?: '\n' | '\r\n';
  /** Longest reply line accepted, bytes. Default 256 bytes. */
  maxLineLength?: number;
}

/**
 * SCPI current meter: `identify()` (`*IDN?`), `configure()` (`*CLS`, `CONF:CURR:DC AUTO`),
 * `read()` (`READ?`, amperes → mA). After a reconnect a configured meter is configured again,
 * because a meter that was power-cycled comes back in its default function.
 */
export class ScpiMeterDriver extends BenchDriver {
  private configured = false;

  constructor(port: DevicePort, options: ScpiMeterDriverOptions = {}) {
    const lineEnding = options.lineEnding ?? '\n';
    const framing = { terminator: lineEnding, maxLineLength: options.maxLineLength ?? 256 } as const;
    super(port, new ProtocolParser(classifyScpiMeterLine, framing), lineEnding, options);
  }

  /** Asks `*IDN?`; rejects on timeout or when the reply is not a four-field identification. */
  async identify(): Promise<ScpiIdentity> {
    const frame = await this.queue.send(SCPI_COMMANDS.identify, { expect: 'text' });
    const identity = frame?.type === 'text' ? parseIdentity(frame.raw) : undefined;
    if (!identity) throw new Error(`${SCPI_COMMANDS.identify} on ${this.port.path}: not an identification reply`);
    return identity;
  }

  /**
   * Clears status, selects DC current with automatic range, then reads the error queue: the
   * reply proves the meter has processed the set-up, and an error entry means it refused it.
   */
  async configure(): Promise<void> {
    await this.queue.send(SCPI_COMMANDS.clearStatus, { expect: 'none' });
    await this.queue.send(SCPI_COMMANDS.configureDcCurrent, { expect: 'none' });
    const frame = await this.queue.send(SCPI_COMMANDS.nextError, { expect: 'text' });
    const entry = frame?.type === 'text' ? frame.raw.trim() : '';
    if (!/^[+]?0,/.test(entry)) {
      throw new Error(`${SCPI_COMMANDS.configureDcCurrent} on ${this.port.path}: meter reported ${entry}`);
    }
    this.configured = true;
  }

  /** Triggers and reads one DC current measurement, in mA. */
  async read(): Promise<DecodedSample> {
    const frame = await this.queue.send(SCPI_COMMANDS.read, { expect: 'sample' });
    if (frame?.type !== 'sample') throw new Error(`${SCPI_COMMANDS.read} on ${this.port.path}: no sample`);
    this.emit('sample.received', frame.sample);
    return frame.sample;
  }

  protected override onConnected(): void {
    if (!this.configured) return;
    this.configure().catch((error: Error) => this.emit('read.failed', error));
  }
}
