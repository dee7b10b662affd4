import { z } from 'zod';
import { InstrumentSchema } from './instruments';

/** Drift and interval analysis of one tag (DESIGN.md §3.8). */
export const DriftEventSchema = z.object({
  jobId: z.string(),
  revision: z.number().int(),
  /** Date of the as-found run, ISO. */
  on: z.string(),
  atMs: z.number(),
  asFound: z.number(),
  asLeft: z.number(),
});

export const DriftPointSchema = z.object({
  key: z.string(),
  nominalPct: z.number(),
  basis: z.enum(['flow', 'dp']),
  direction: z.enum(['up', 'down']),
  events: z.array(DriftEventSchema),
  drifts: z.array(z.object({ from: z.string(), to: z.string(), drift: z.number(), ratePerDay: z.number().nullable() })),
  /** Predicted as-found error at the next due date, % of span; null without drift history. */
  predictedAtDue: z.number().nullable(),
});
export type DriftPoint = z.infer<typeof DriftPointSchema>;

export const IntervalRecommendationSchema = z.object({
  method: z.enum(['staircase', 'reliability']),
  action: z.enum(['extend', 'keep', 'shorten']),
  recommendedDays: z.number().int(),
  /** How it was found, in words with the numbers. */
  basis: z.string(),
});
export type IntervalRecommendation = z.infer<typeof IntervalRecommendationSchema>;

export const DriftReportSchema = z.object({
  instrument: InstrumentSchema,
  /** Errors are in % of span (of flow span for rooted outputs). */
  unit: z.literal('% of span'),
  tolerancePct: z.number(),
  calibrations: z.number().int(),
  inTolerance: z.number().int(),
  points: z.array(DriftPointSchema),
  /** Largest |predicted error| at the next due date over all points, or null. */
  worstPredicted: z.number().nullable(),
  recommendations: z.array(IntervalRecommendationSchema),
  /** Which recommendation governs and why, in words; null without any. Additive. */
  governing: z.object({ method: z.enum(['staircase', 'reliability']), reason: z.string() }).nullable().optional(),
});
export type DriftReport = z.infer<typeof DriftReportSchema>;

export const AcceptIntervalBodySchema = z.object({
  intervalDays: z.number().int().min(1).max(3650),
  method: z.enum(['staircase', 'reliability']),
});
export type AcceptIntervalBody = z.infer<typeof AcceptIntervalBodySchema>;
