/**
 * Output-mode check before the as-found pass: at 25 % DP a transmitter that extracts the root
 * reads 12 mA (50 % flow) and one that does not reads 8 mA (common practice, REFERENCE.md).
 */
import { classifyNe43 } from './transfer';

/** Decision of the output-mode check. */
export type ModeCheckDecision = 'root-in-transmitter' | 'linear-output' | 'cannot-tell';

/** Expected current at 25 % DP with the root in the transmitter, mA. */
export const MODE_CHECK_ROOTED_MA = 12;
/** Expected current at 25 % DP with a DP-linear output, mA. */
export const MODE_CHECK_LINEAR_MA = 8;
/**
 * Default decision half-band, mA (product choice): ±1.5 mA around 12 or 8 mA. The two bands
 * (6.5–9.5 and 10.5–13.5 mA) do not overlap; between and outside them the check cannot tell.
 */
export const DEFAULT_MODE_CHECK_BAND_MA = 1.5;

/** Result of the output-mode check. */
export interface ModeCheckResult {
  decision: ModeCheckDecision;
  /** Why the check could not tell, when it could not. */
  reason?: string;
}

/**
 * Decide from a current read with 25 % DP applied. `bandMa` (default 1.5 mA) must be below 2 mA
 * so the bands stay apart; a larger one is a programmer error.
 */
export function checkOutputMode(maAt25PctDp: number, bandMa: number = DEFAULT_MODE_CHECK_BAND_MA): ModeCheckResult {
  if (!(bandMa > 0 && bandMa < 2)) throw new RangeError(`mode-check band ${bandMa} mA must be in (0, 2)`);
  if (!classifyNe43(maAt25PctDp).isMeasurement) return { decision: 'cannot-tell', reason: 'current outside the NE 43 measurement range' };
  if (Math.abs(maAt25PctDp - MODE_CHECK_ROOTED_MA) <= bandMa) return { decision: 'root-in-transmitter' };
  if (Math.abs(maAt25PctDp - MODE_CHECK_LINEAR_MA) <= bandMa) return { decision: 'linear-output' };
  return { decision: 'cannot-tell', reason: 'current near neither 8 mA nor 12 mA' };
}
