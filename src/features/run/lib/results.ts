/**
 * A run's `results`, read through the one results contract (shared/schemas/runs
 * `RunResultsSchema`): the server parses stored results against it, and the client checks again
 * so that a screen never shows a value of the wrong shape.
 */
import { RunResultsSchema, type ResultPoint, type RunResults } from '../../../../shared/schemas/runs';

export { ResultPointSchema, RunResultsSchema } from '../../../../shared/schemas/runs';
export type { ResultPoint, RunResults };

/** Results of a run, or null when there are none or they do not match the contract. */
export function parseResults(results: unknown): RunResults | null {
  if (results === null || results === undefined) return null;
  const parsed = RunResultsSchema.safeParse(results);
  return parsed.success ? parsed.data : null;
}

/**
 * Hysteresis at a point's nominal, % of output span: error up − error down at that nominal, as the
 * calc engine computed it (REFERENCE.md: the errors, each referred to its own applied value, not
 * the raw mA difference).
 */
export function hysteresisAt(results: RunResults, nominalPct: number): number | null {
  return results.hysteresis.find((h) => h.nominalPct === nominalPct)?.hysteresisPctSpan ?? null;
}
