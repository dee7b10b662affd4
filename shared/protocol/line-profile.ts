/**
 * Configurable line protocol for pressure calibrators: the bench admin states how to ask for a
 * reading (or that the device streams), what a reply looks like and which unit it is in.
 */
import type { LineTerminator } from './line-framer';
import { parseDecimal, type DecodeResult } from './sample';

/** How a pressure calibrator delivers readings: on request, or free-running. */
export type LineProtocolMode = 'query' | 'stream';

/** A pressure-calibrator line protocol, as stored per bench device. */
export interface LineProtocolProfile {
  /** Short id shown on the Bench page, e.g. `'stillpoint-simcal'`. */
  id: string;
  mode: LineProtocolMode;
  /** Command sent (terminated with `lineEnding`) to ask for one reading in `query` mode. */
  queryCommand: string;
  /**
   * JavaScript regular-expression source matched against each line. Must have a named group
   * `value` and may have a named group `unit`; it is compiled without flags.
   */
  responsePattern: string;
  /** Our pressure unit id that readings are expected in, e.g. `'inH2O@68F'`, `'kPa'`, `'mbar'`. */
  unit: string;
  /** Factor applied to the matched value to get `unit` (e.g. 0.001 for a device reporting Pa as kPa). Default 1. */
  scale: number;
  /** Terminator of lines in both directions. */
  lineEnding: LineTerminator;
  /**
   * Unit tokens the device prints, mapped to our unit ids, for devices that spell units their own
   * way (`{ KPA: 'kPa' }`). A token absent here must equal `unit` exactly. Default none.
   */
  unitAliases?: Record<string, string>;
  /** Command that starts free-running output in `stream` mode. Default none (device always streams). */
  streamStartCommand?: string;
  /** Command that stops free-running output. Default none. */
  streamStopCommand?: string;
}

/**
 * Profile of the simulated calibrator that ships with Stillpoint (our own dialect, used in
 * development, tests and the demo). Query `DP?`, reply `DP +12.34567 inH2O@68F`.
 */
export const SIMCAL_PROFILE: LineProtocolProfile = {
  id: 'stillpoint-simcal',
  mode: 'query',
  queryCommand: 'DP?',
  responsePattern: '^DP\\s+(?<value>\\S+)\\s+(?<unit>\\S+)$',
  unit: 'inH2O@68F',
  scale: 1,
  lineEnding: '\r\n',
  streamStartCommand: 'FEED ON',
  streamStopCommand: 'FEED OFF',
};

/** Commands the simulated calibrator understands besides the profile's own (our dialect). */
export const SIMCAL_COMMANDS = {
  /** Identification: replies `SIMCAL,<model>,<serial>,<firmware>`. */
  identify: 'WHO?',
  /** Free-running rate: `FEED RATE <hz>` (1–50 readings/s). */
  feedRate: 'FEED RATE',
} as const;

/** Problems that make a profile unusable, empty when it is fine. */
export function validateLineProfile(profile: LineProtocolProfile): string[] {
  const problems: string[] = [];
  let pattern: RegExp | undefined;
  try {
    pattern = new RegExp(profile.responsePattern);
  } catch (error) {
    problems.push(`responsePattern is not a valid regular expression: ${(error as Error).message}`);
  }
  if (pattern && !/\(\?<value>/.test(profile.responsePattern)) problems.push('responsePattern needs a named group "value"');
  if (profile.mode === 'query' && profile.queryCommand.trim() === '') problems.push('queryCommand is empty in query mode');
  if (!Number.isFinite(profile.scale) || profile.scale === 0) problems.push('scale must be a finite, non-zero number');
  if (profile.unit.trim() === '') problems.push('unit is empty');
  return problems;
}

/** Decoder of one profile's lines. */
export type LineDecoder = (line: string) => DecodeResult;

/**
 * Builds the decoder for a profile. Throws a `TypeError` listing the problems when the profile is
 * invalid (check with {@link validateLineProfile} first when the profile comes from a user).
 * The decoder never throws: a line that does not match is `no-match`, a value that is not a
 * decimal number is `not-a-number`, a unit other than the profile's is `wrong-unit`.
 */
export function createLineDecoder(profile: LineProtocolProfile): LineDecoder {
  const problems = validateLineProfile(profile);
  if (problems.length > 0) throw new TypeError(`invalid line protocol profile "${profile.id}": ${problems.join('; ')}`);
  const pattern = new RegExp(profile.responsePattern);
  const aliases = profile.unitAliases ?? {};
  return (line) => {
    const match = pattern.exec(line);
    const groups = match?.groups;
    if (!groups || groups.value === undefined) return { ok: false, reason: 'no-match', detail: line.slice(0, 40) };
    const raw = parseDecimal(groups.value);
    if (raw === undefined) return { ok: false, reason: 'not-a-number', detail: groups.value.slice(0, 40) };
    if (groups.unit !== undefined) {
      const unit = aliases[groups.unit] ?? groups.unit;
      if (unit !== profile.unit) return { ok: false, reason: 'wrong-unit', detail: `${groups.unit} (expected ${profile.unit})` };
    }
    const value = raw * profile.scale;
    if (!Number.isFinite(value)) return { ok: false, reason: 'overflow', detail: groups.value };
    return { ok: true, value, unit: profile.unit };
  };
}

/** The simulated calibrator's profile in free-running mode (`FEED ON`, about 10 lines/s). */
export const SIMCAL_FEED_PROFILE: LineProtocolProfile = { ...SIMCAL_PROFILE, id: 'stillpoint-simcal-feed', mode: 'stream' };
