/** HART: data link framing, data types, common tables and typed command codecs (pure; server, simulator and Web Serial). */
export * from './codec';
export * from './common-practice-commands';
export * from './data-types';
export * from './frame';
export * from './frame-decoder';
export * from './tables';
export * from './universal-commands';

import type { HartCommandCodec } from './codec';
import { CMD38_RESET_CHANGED, CMD40_FIXED_CURRENT, CMD43_ZERO, CMD45_TRIM_ZERO, CMD46_TRIM_GAIN, CMD80_TRIM_POINTS, CMD81_TRIM_GUIDELINES, CMD82_WRITE_TRIM, CMD83_RESET_TRIM } from './common-practice-commands';
import { CMD0_IDENTITY, CMD13_TAG, CMD15_INFO, CMD1_PV, CMD2_CURRENT, CMD3_DYNAMIC } from './universal-commands';

/** Every command codec by number. */
export const HART_COMMANDS: ReadonlyMap<number, HartCommandCodec<never, unknown>> = new Map(
  [CMD0_IDENTITY, CMD1_PV, CMD2_CURRENT, CMD3_DYNAMIC, CMD13_TAG, CMD15_INFO, CMD38_RESET_CHANGED, CMD40_FIXED_CURRENT, CMD43_ZERO, CMD45_TRIM_ZERO, CMD46_TRIM_GAIN, CMD80_TRIM_POINTS, CMD81_TRIM_GUIDELINES, CMD82_WRITE_TRIM, CMD83_RESET_TRIM].map(
    (c) => [c.command, c as HartCommandCodec<never, unknown>],
  ),
);

/** "command 3 (read dynamic variables and loop current)", or "command 99" for one without a codec. */
export function commandLabel(command: number): string {
  const name = HART_COMMANDS.get(command)?.name;
  return name ? `command ${command} (${name})` : `command ${command}`;
}
