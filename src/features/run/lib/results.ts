/**
 * Reading a run's `results` (shared/calc `evaluateCalibration` output, typed `unknown` in the
 * contract) defensively: only the fields the screens show, every one optional or nullable.
 */
import { z } from 'zod';

const num = z.number().nullable().optional();

export const ResultPointSchema = z.object({
  index: z.number(),
  nominalPct: z.number(),
  basis: z.enum(['flow', 'dp']).optional(),
  direction: z.enum(['up', 'down']),
  appliedDp: z.number(),
  appliedDpPct: num,
  appliedFlowPct: num,
  expectedMa: z.number(),
  measuredMa: z.number(),
  errorPctSpan: z.number(),
  dpEquivalentError: num,
  expandedUncertaintyPctSpan: num,
  tur: num,
  decision: z.string(),
  acceptanceLimitPctSpan: num,
  conformanceProbability: num,
});
export type ResultPoint = z.infer<typeof ResultPointSchema>;

const HysteresisSchema = z.object({ nominalPct: z.number(), basis: z.enum(['flow', 'dp']).optional(), hysteresisPctSpan: z.number().nullable() }).passthrough();
/** A hysteresis list of another shape hides the column's values, never the whole table. */
const HysteresisListSchema = z.array(HysteresisSchema).optional().catch(undefined);

export const RunResultsSchema = z.object({
  points: z.array(ResultPointSchema),
  hysteresis: HysteresisListSchema,
  maxHysteresisPctSpan: num,
  worstError: z.object({ index: z.number(), errorPctSpan: z.number() }).nullable().optional(),
  overallDecision: z.string().nullable().optional(),
});
export type RunResults = z.infer<typeof RunResultsSchema>;

/** Results of a run, or null when there are none or they do not have the expected shape. */
export function parseResults(results: unknown): RunResults | null {
  if (results === null || results === undefined) return null;
  // The server may wrap the calc union ({ ok, value }) or store the value itself.
  const value = typeof results === 'object' && results !== null && 'ok' in results && 'value' in results ? (results as { value: unknown }).value : results;
  const parsed = RunResultsSchema.safeParse(value);
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
