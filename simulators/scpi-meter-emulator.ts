/** A simulated bench multimeter that measures loop current and answers standard SCPI. */
import { formatScpiNumber } from '../shared/protocol';
import { LineDeviceEmulator, type LineDeviceOptions } from './line-device';

/** Options of {@link ScpiMeterEmulator}. */
export interface ScpiMeterEmulatorOptions extends LineDeviceOptions {
  /** The loop current now, mA. */
  readCurrentMa: () => number;
  /** `*IDN?` reply. Default `STILLPOINT,SIM-DMM,0001,1.0`. */
  identity?: string;
  /** DC voltage shown before the meter is configured for current, V. Default 24 V (the loop supply). */
  idleVolts?: number;
}

type MeterFunction = 'volt' | 'curr';

const COMMANDS: [RegExp, string][] = [
  [/^\*IDN\?$/, 'idn'],
  [/^\*RST$/, 'rst'],
  [/^\*CLS$/, 'cls'],
  [/^CONF(?:IGURE)?:CURR(?:ENT)?(?::DC)?(?:\s+\S+)*$/, 'conf-curr'],
  [/^CONF(?:IGURE)?:VOLT(?:AGE)?(?::DC)?(?:\s+\S+)*$/, 'conf-volt'],
  [/^READ\?$/, 'read'],
  [/^MEAS(?:URE)?:CURR(?:ENT)?(?::DC)?\?(?:\s+\S+)*$/, 'meas-curr'],
  [/^SYST(?:EM)?:ERR(?:OR)?(?::NEXT)?\?$/, 'err'],
];

/**
 * SCPI meter: `*IDN?`, `*RST`, `*CLS`, `CONF:CURR:DC [range]`, `CONF:VOLT:DC`, `READ?`,
 * `MEAS:CURR:DC?`, `SYST:ERR?`; long and short forms, case-insensitive, `;`-separated. Unknown
 * headers go to the error queue as `-113,"Undefined header"`. Powers up measuring DC volts.
 */
export class ScpiMeterEmulator extends LineDeviceEmulator {
  /** When true, readings come back as the SCPI overflow code 9.9E37. */
  overflow = false;
  private readonly options: ScpiMeterEmulatorOptions;
  private fn: MeterFunction = 'volt';
  private readonly errors: string[] = [];

  constructor(options: ScpiMeterEmulatorOptions) {
    super('\n', options);
    this.options = options;
  }

  /** Measuring function, for tests. */
  get measuring(): MeterFunction {
    return this.fn;
  }

  protected handle(line: string): string | undefined {
    const replies: string[] = [];
    for (const part of line.split(';')) {
      const command = part.trim().toUpperCase();
      if (command === '') continue;
      const action = COMMANDS.find(([re]) => re.test(command))?.[1];
      const reply = this.run(action);
      if (reply !== undefined) replies.push(reply);
    }
    // IEEE 488.2: replies to several queries in one message are joined with ';'.
    return replies.length > 0 ? replies.join(';') : undefined;
  }

  /** Power cycle: back to DC volts, error queue cleared. */
  powerCycle(): void {
    this.fn = 'volt';
    this.errors.length = 0;
  }

  private run(action: string | undefined): string | undefined {
    switch (action) {
      case 'idn':
        return this.options.identity ?? 'STILLPOINT,SIM-DMM,0001,1.0';
      case 'rst':
        this.fn = 'volt';
        return undefined;
      case 'cls':
        this.errors.length = 0;
        return undefined;
      case 'conf-curr':
        this.fn = 'curr';
        return undefined;
      case 'conf-volt':
        this.fn = 'volt';
        return undefined;
      case 'meas-curr':
        this.fn = 'curr';
        return this.reading();
      case 'read':
        return this.reading();
      case 'err':
        return this.errors.shift() ?? '+0,"No error"';
      default:
        if (this.errors.length < 20) this.errors.push('-113,"Undefined header"');
        return undefined;
    }
  }

  private reading(): string {
    if (this.overflow) return '+9.90000000E+37';
    if (this.fn === 'volt') return formatScpiNumber(this.options.idleVolts ?? 24);
    return formatScpiNumber(this.options.readCurrentMa() / 1000);
  }
}
