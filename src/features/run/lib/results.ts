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
 * Hysteresis at a result point's nominal, % of span, as the API evaluated it (shared/calc: the
 * difference of the up and down errors at the same nominal, REFERENCE.md "Transfer functions");
 * null when the nominal was not read both ways. Never recomputed here.
 */
export function hysteresisAt(results: RunResults, point: Pick<ResultPoint, 'nominalPct' | 'basis'>): number | null {
  const h = results.hysteresis?.find((x) => x.nominalPct === point.nominalPct && (x.basis === undefined || point.basis === undefined || x.basis === point.basis));
  return h?.hysteresisPctSpan ?? null;
}

/**
 * The evaluated result of each point of a run, by plan index: the API evaluates the captured
 * points in plan order, so the k-th result belongs to the k-th captured point.
 */
export function resultsByPoint(points: ReadonlyArray<{ index: number; capture: unknown }>, results: RunResults | null): Map<number, ResultPoint> {
  const out = new Map<number, ResultPoint>();
  if (!results) return out;
  let k = 0;
  for (const p of [...points].sort((a, b) => a.index - b.index)) {
    if (!p.capture) continue;
    const r = results.points[k++];
    if (r) out.set(p.index, r);
  }
  return out;
}

/** What errors are a percentage of: flow span for a root in the transmitter, else output span (REFERENCE.md). */
export function spanWords(outputMode: string | undefined, rooted: boolean): 'flow span' | 'span' {
  return outputMode ? (outputMode === 'sqrt-transmitter' ? 'flow span' : 'span') : rooted ? 'flow span' : 'span';
}
