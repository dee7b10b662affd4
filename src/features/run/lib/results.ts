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

export const RunResultsSchema = z.object({
  points: z.array(ResultPointSchema),
  hysteresis: z.array(z.object({ nominalPct: z.number().optional(), hysteresisPctSpan: z.number().nullable().optional() }).passthrough()).optional(),
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

/** Hysteresis at a point's nominal, % of span, from the paired up/down readings. */
export function hysteresisAt(results: RunResults, nominalPct: number): number | null {
  const ups = results.points.filter((p) => p.nominalPct === nominalPct && p.direction === 'up');
  const downs = results.points.filter((p) => p.nominalPct === nominalPct && p.direction === 'down');
  if (!ups[0] || !downs[0]) return null;
  return Math.abs(ups[0].measuredMa - downs[0].measuredMa) / 0.16;
}
