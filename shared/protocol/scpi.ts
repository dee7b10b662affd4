/**
 * SCPI / IEEE 488.2 current-meter replies: identification and DC current readings.
 * Only standard IEEE 488.2 common commands and SCPI measurement commands are used.
 */
import { parseDecimal, type DecodeResult } from './sample';

/** Commands the current-meter driver sends (IEEE 488.2 common commands and SCPI-99 subsystems). */
export const SCPI_COMMANDS = {
  /** IEEE 488.2 §10.14 identification query. */
  identify: '*IDN?',
  /** IEEE 488.2 §10.32 reset. */
  reset: '*RST',
  /** IEEE 488.2 §10.3 clear status. */
  clearStatus: '*CLS',
  /** Configure DC current with automatic range. */
  configureDcCurrent: 'CONF:CURR:DC AUTO',
  /** Trigger and read one measurement in the configured function. */
  read: 'READ?',
  /** Configure DC current and measure once. */
  measureDcCurrent: 'MEAS:CURR:DC?',
  /** Read the oldest entry of the error queue. */
  nextError: 'SYST:ERR?',
} as const;

/** Fields of an IEEE 488.2 `*IDN?` reply. */
export interface ScpiIdentity {
  manufacturer: string;
  model: string;
  /** `'0'` when the instrument does not report one. */
  serial: string;
  firmware: string;
}

/**
 * Parses an `*IDN?` reply: four comma-separated fields (IEEE 488.2 §10.14).
 * `undefined` when the line does not have exactly four non-empty fields.
 */
export function parseIdentity(line: string): ScpiIdentity | undefined {
  const fields = line.trim().split(',').map((f) => f.trim());
  if (fields.length !== 4 || fields.some((f) => f.length === 0)) return undefined;
  const [manufacturer, model, serial, firmware] = fields as [string, string, string, string];
  return { manufacturer, model, serial, firmware };
}

/**
 * Magnitude at or above which a SCPI reading is a status code, not a measurement: SCPI-99 Vol. 1
 * §7.2.1 uses 9.9E37 for overflow (±infinity) and 9.91E37 for not-a-number (clause from memory).
 */
export const SCPI_OVERFLOW = 9.9e37;

/**
 * Decodes a DC current reading from `READ?` or `MEAS:CURR:DC?`, e.g. `+1.234567E-02` (amperes),
 * into milliamperes (`unit: 'mA'`). Rejects a non-numeric reply (`not-a-number`) and the SCPI
 * overflow / not-a-number codes (`overflow`). Never throws.
 */
export function decodeScpiCurrent(line: string): DecodeResult {
  const amps = parseDecimal(line);
  if (amps === undefined) return { ok: false, reason: 'not-a-number', detail: line.slice(0, 40) };
  if (Math.abs(amps) >= SCPI_OVERFLOW) return { ok: false, reason: 'overflow', detail: line.trim() };
  // Round away the float noise of the A → mA conversion (1.234567E-02 * 1000 = 12.345670000000002).
  return { ok: true, value: Number((amps * 1000).toPrecision(12)), unit: 'mA' };
}

/** Formats amperes the way SCPI meters reply (NR3, seven significant digits): `+1.234567E-02`. */
export function formatScpiNumber(value: number): string {
  if (!Number.isFinite(value)) return '+9.91000000E+37';
  const [mantissa, exponent] = Math.abs(value).toExponential(6).split('e') as [string, string];
  const exp = Number(exponent);
  const sign = value < 0 ? '-' : '+';
  return `${sign}${mantissa}E${exp < 0 ? '-' : '+'}${String(Math.abs(exp)).padStart(2, '0')}`;
}
