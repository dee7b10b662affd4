/**
 * HART common tables (HCF_SPEC-183) and the status bytes (HCF_SPEC-081/-099/-127) in words.
 * The codes here are from memory of those specifications except where a line names REFERENCE.md;
 * only the handful Stillpoint needs are listed, everything else is shown as its number.
 */

/**
 * Unit codes (common table 2) to Stillpoint's unit ids (shared/calc PRESSURE_UNIT_IDS, `mA`, `%`).
 * Codes 1, 4, 145, 238, 239: REFERENCE.md ("HART unit codes 1 and 4 are inH2O and mmH2O at 68 °F;
 * 145 is inH2O at 60 °F; 238 and 239 are inH2O and mmH2O at 4 °C"). The rest from memory.
 */
export const HART_UNIT_CODES: Readonly<Record<number, string>> = Object.freeze({
  1: 'inH2O@68F',
  2: 'inHg@32F', // inHg at 0 °C (= 32 °F), from memory
  3: 'ftH2O@68F',
  4: 'mmH2O@68F',
  5: 'mmHg', // mmHg at 0 °C, from memory
  6: 'psi',
  7: 'bar',
  8: 'mbar',
  10: 'kgf/cm2',
  11: 'Pa',
  12: 'kPa',
  13: 'torr',
  39: 'mA',
  57: '%',
  145: 'inH2O@60F',
  237: 'MPa',
  238: 'inH2O@4C',
  239: 'mmH2O@4C',
});

/** Unit id of a HART unit code, or `undefined` for a code Stillpoint does not map. */
export function unitOfCode(code: number): string | undefined {
  return HART_UNIT_CODES[code];
}

/** HART unit code of a Stillpoint unit id, or `undefined`. */
export function codeOfUnit(unit: string): number | undefined {
  for (const [code, id] of Object.entries(HART_UNIT_CODES)) if (id === unit) return Number(code);
  return undefined;
}

/** Transfer function codes (common table 3, from memory); Stillpoint uses 0 and 1. */
export const HART_TRANSFER_FUNCTIONS: Readonly<Record<number, string>> = Object.freeze({
  0: 'linear',
  1: 'square root',
  2: 'square root third power',
  3: 'square root fifth power',
  4: 'special curve',
  5: 'square',
  230: 'discrete',
  250: 'not used',
  251: 'none',
  252: 'unknown',
  253: 'special',
});

/** Alarm selection codes (common table 6, from memory). */
export const HART_ALARM_SELECTION: Readonly<Record<number, string>> = Object.freeze({
  0: 'high',
  1: 'low',
  239: 'hold last output value',
  250: 'not used',
  251: 'none',
  252: 'unknown',
  253: 'special',
});

/** Write protect codes (common table 7, from memory). */
export const HART_WRITE_PROTECT: Readonly<Record<number, string>> = Object.freeze({
  0: 'not write protected',
  1: 'write protected',
  250: 'not used',
  251: 'none',
  252: 'unknown',
  253: 'special',
});

/** A code's words in a table, or "code N". */
export function describeCode(table: Readonly<Record<number, string>>, code: number): string {
  return table[code] ?? `code ${code}`;
}

/** Field device status bits, most significant first (from memory of HCF_SPEC-099 / -127). */
export const HART_DEVICE_STATUS_BITS = [
  [0x80, 'device malfunction'],
  [0x40, 'configuration changed'],
  [0x20, 'cold start'],
  [0x10, 'more status available'],
  [0x08, 'loop current fixed'],
  [0x04, 'loop current saturated'],
  [0x02, 'non-primary variable out of limits'],
  [0x01, 'primary variable out of limits'],
] as const;

/** Named field device status bits. */
export const DEVICE_STATUS = {
  malfunction: 0x80,
  configurationChanged: 0x40,
  coldStart: 0x20,
  moreStatus: 0x10,
  loopCurrentFixed: 0x08,
  loopCurrentSaturated: 0x04,
  nonPvOutOfLimits: 0x02,
  pvOutOfLimits: 0x01,
} as const;

/** The set bits of a field device status byte, in words. */
export function describeDeviceStatus(status: number): string[] {
  return HART_DEVICE_STATUS_BITS.filter(([bit]) => (status & bit) !== 0).map(([, words]) => words);
}

/**
 * Communication error bits of the first status byte when its top bit is set: the device heard a
 * damaged request (from memory of HCF_SPEC-081).
 */
const COMMUNICATION_ERRORS = [
  [0x40, 'parity error'],
  [0x20, 'overrun error'],
  [0x10, 'framing error'],
  [0x08, 'checksum error'],
  [0x02, 'receive buffer overflow'],
] as const;

/** Response codes common to most commands (from memory of HCF_SPEC-307 / -127). */
const RESPONSE_CODES: Readonly<Record<number, string>> = {
  0: 'success',
  1: 'undefined',
  2: 'invalid selection',
  3: 'passed parameter too large',
  4: 'passed parameter too small',
  5: 'too few data bytes received',
  6: 'device-specific command error',
  7: 'in write protect mode',
  8: 'warning: set to nearest possible value',
  16: 'access restricted',
  32: 'busy',
  33: 'delayed response initiated',
  34: 'delayed response running',
  35: 'delayed response dead',
  36: 'delayed response conflict',
  64: 'command not implemented',
};

/** Command-specific meanings of codes 9–15 for the commands Stillpoint sends (from memory of HCF_SPEC-127/-151). */
const COMMAND_CODES: Readonly<Record<number, Readonly<Record<number, string>>>> = {
  40: { 11: 'in multidrop mode', 12: 'invalid mode selection' },
  43: { 9: 'applied process too high', 10: 'applied process too low' },
  45: { 9: 'incorrect loop current mode or value', 11: 'loop current not active (device in multidrop mode)' },
  46: { 9: 'incorrect loop current mode or value', 11: 'loop current not active (device in multidrop mode)' },
  82: { 9: 'applied process too high', 10: 'applied process too low', 11: 'trim error, excess correction attempted' },
};

/** True when the first status byte reports a communication error rather than a command response. */
export function isCommunicationError(responseCode: number): boolean {
  return (responseCode & 0x80) !== 0;
}

/** Response codes that succeed (0) or succeed with a warning (8 for most commands; from memory). */
export function isSuccess(responseCode: number): boolean {
  return responseCode === 0 || responseCode === 8;
}

/** The first status byte in words, for the command it answers. */
export function describeResponseCode(responseCode: number, command?: number): string {
  if (isCommunicationError(responseCode)) {
    const words = COMMUNICATION_ERRORS.filter(([bit]) => (responseCode & bit) !== 0).map(([, w]) => w);
    return `communication error${words.length > 0 ? `: ${words.join(', ')}` : ''}`;
  }
  const specific = command === undefined ? undefined : COMMAND_CODES[command]?.[responseCode];
  return specific ?? RESPONSE_CODES[responseCode] ?? `response code ${responseCode}`;
}
