/**
 * A simulated pressure calibrator speaking Stillpoint's own line dialect (see `SIMCAL_PROFILE`):
 * `DP?` → `DP +12.34567 inH2O@68F`, `WHO?`, `FEED ON` / `FEED OFF` / `FEED RATE <hz>`.
 */
import { SIMCAL_COMMANDS, SIMCAL_PROFILE } from '../shared/protocol';
import { LineDeviceEmulator, type LineDeviceOptions } from './line-device';

/** Options of {@link PressureCalibratorEmulator}. */
export interface PressureCalibratorEmulatorOptions extends LineDeviceOptions {
  /** The applied pressure now, in `unit`. */
  readPressure: () => number;
  /** Unit id printed after the value. Default `'inH2O@68F'`. */
  unit?: string;
  /** Free-running rate, lines/s. Default 10 lines/s. */
  feedRateHz?: number;
  /** Decimal places printed. Default 5. */
  decimals?: number;
}

export class PressureCalibratorEmulator extends LineDeviceEmulator {
  /** Unit printed on replies instead of the true one (a calibrator left on the wrong unit); `undefined`: none. */
  wrongUnit: string | undefined;
  feedRateHz: number;
  private readonly options: PressureCalibratorEmulatorOptions;
  private feeding = false;
  private feedTimer: NodeJS.Timeout | undefined;

  constructor(options: PressureCalibratorEmulatorOptions) {
    super(SIMCAL_PROFILE.lineEnding, options);
    this.options = options;
    this.feedRateHz = options.feedRateHz ?? 10;
  }

  /** The reading line as the calibrator prints it now. */
  readingLine(): string {
    const value = this.options.readPressure();
    const text = `${value < 0 ? '-' : '+'}${Math.abs(value).toFixed(this.options.decimals ?? 5)}`;
    return `DP ${text} ${this.wrongUnit ?? this.options.unit ?? 'inH2O@68F'}`;
  }

  protected handle(line: string): string | undefined {
    const command = line.toUpperCase();
    if (command === SIMCAL_PROFILE.queryCommand) return this.readingLine();
    if (command === SIMCAL_COMMANDS.identify) return 'SIMCAL,SC-100,0007,1.0';
    if (command === SIMCAL_PROFILE.streamStartCommand) return this.startFeed();
    if (command === SIMCAL_PROFILE.streamStopCommand) return this.stopFeed();
    if (command.startsWith(`${SIMCAL_COMMANDS.feedRate} `)) {
      const hz = Number(command.slice(SIMCAL_COMMANDS.feedRate.length + 1));
      if (Number.isFinite(hz) && hz >= 1 && hz <= 50) this.feedRateHz = hz;
      if (this.feeding) this.startFeed();
      return undefined;
    }
    return 'ERR UNKNOWN';
  }

  protected override onDisconnect(): void {
    // The feed setting survives a cable pull but not a power cycle; the line stops while unplugged.
    clearInterval(this.feedTimer);
    this.feedTimer = undefined;
  }

  protected override onConnect(): void {
    if (this.feeding) this.startFeed();
  }

  /** Power cycle: feed off. */
  powerCycle(): void {
    this.stopFeed();
  }

  private startFeed(): undefined {
    this.feeding = true;
    clearInterval(this.feedTimer);
    this.feedTimer = setInterval(() => {
      if (this.connected) this.emitLine(this.readingLine());
    }, 1000 / this.feedRateHz);
    return undefined;
  }

  private stopFeed(): undefined {
    this.feeding = false;
    clearInterval(this.feedTimer);
    this.feedTimer = undefined;
    return undefined;
  }
}
