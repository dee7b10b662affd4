import { z } from 'zod';
import { DECISION_RULES, FLOW_UNITS, PRESSURE_UNIT_IDS } from '../calc';
import { CutoffModeSchema, OutputModeSchema, PrimaryElementSchema } from './instruments';

export const PressureUnitSchema = z.enum(PRESSURE_UNIT_IDS, { message: 'Unknown pressure unit' });

const num = (label: string) => z.number({ message: `${label} must be a number` }).finite(`${label} must be finite`);
const nonNeg = (label: string) => num(label).min(0, `${label} cannot be negative`);

export const PressureReferenceSpecSchema = z.discriminatedUnion('kind', [
  z.object({
    kind: z.literal('spec'),
    unit: PressureUnitSchema,
    pctOfReading: nonNeg('% of reading').max(10),
    pctOfFullScale: nonNeg('% of full scale').max(10),
    fullScale: num('Full scale').positive('Full scale must be above 0'),
    resolution: nonNeg('Resolution').optional(),
  }),
  z.object({
    kind: z.literal('certificate'),
    unit: PressureUnitSchema,
    expandedU: nonNeg('Expanded uncertainty'),
    k: num('Coverage factor').positive().max(10),
    resolution: nonNeg('Resolution').optional(),
  }),
]);

export const CurrentMeterSpecSchema = z.object({
  pctOfReading: nonNeg('% of reading').max(10),
  floorMa: nonNeg('Floor'),
  resolutionMa: nonNeg('Resolution').optional(),
});

/** Body of `POST /api/calc/evaluate`: mirrors `EvaluateInput` of shared/calc. */
export const EvaluateBodySchema = z.object({
  instrument: z
    .object({
      lrv: num('LRV'),
      urv: num('URV'),
      unit: PressureUnitSchema,
      outputMode: OutputModeSchema,
      cutoffMode: CutoffModeSchema.optional(),
      cutoffValue: nonNeg('Cutoff').max(50).optional(),
      tolerancePctSpan: num('Tolerance').positive('Tolerance must be above 0').max(50),
    })
    .refine((i) => i.lrv !== i.urv, { message: 'LRV and URV must differ', path: ['urv'] }),
  standards: z.object({ pressure: PressureReferenceSpecSchema, current: CurrentMeterSpecSchema }),
  decisionRule: z.enum(DECISION_RULES),
  readings: z
    .array(
      z.object({
        nominalPct: num('Nominal %').min(-25).max(125),
        basis: z.enum(['flow', 'dp']).optional(),
        direction: z.enum(['up', 'down']),
        appliedDp: num('Applied DP'),
        measuredMa: num('Measured current').min(0).max(30),
        appliedDpSd: nonNeg('DP standard deviation').optional(),
        measuredMaSd: nonNeg('Current standard deviation').optional(),
        n: z.number().int().min(1).max(10_000_000).optional(),
      }),
    )
    .min(1, 'Give at least one reading')
    .max(200),
  coverageFactor: num('Coverage factor').positive().max(10).optional(),
});
export type EvaluateBody = z.infer<typeof EvaluateBodySchema>;

/** Body of `POST /api/calc/intervals`: a history of in-tolerance counts at interval lengths, and the targets. */
export const IntervalsBodySchema = z
  .object({
    history: z
      .array(
        z
          .object({
            intervalDays: num('Interval').positive('Interval must be above 0 days').max(36500),
            inTolerance: z.number().int('Whole calibrations').min(0),
            total: z.number().int('Whole calibrations').min(1, 'At least one calibration'),
          })
          .refine((g) => g.inTolerance <= g.total, { message: 'In-tolerance count cannot exceed the total', path: ['inTolerance'] }),
      )
      .min(1, 'Give at least one interval')
      .max(100),
    /** Current interval, days; the interval test uses the history at it (all history pooled when absent there). */
    currentIntervalDays: num('Current interval').positive().max(36500),
    /** End-of-period reliability target, 0–1 exclusive; default 0.95. */
    reliabilityTarget: num('Reliability target').gt(0, 'Above 0').lt(1, 'Below 1').default(0.95),
    /** Two-sided confidence, 0–1 exclusive; default 0.5. */
    confidence: num('Confidence').gt(0, 'Above 0').lt(1, 'Below 1').default(0.5),
  });
export type IntervalsBody = z.infer<typeof IntervalsBodySchema>;

/** Body of `POST /api/calc/orifice`: ISO 5167-2 flow for a given element and fluid at a DP. */
export const OrificeBodySchema = z.object({
  element: PrimaryElementSchema.refine((e) => e.boreDiameterMm < e.pipeDiameterMm, { message: 'The bore must be smaller than the pipe', path: ['boreDiameterMm'] }).refine(
    (e) => e.fluid !== 'gas' || (e.kappa !== undefined && e.upstreamPressurePa !== undefined),
    { message: 'A gas needs κ and the upstream pressure', path: ['kappa'] },
  ),
  /** Differential pressure, in `unit`. */
  dp: num('DP').positive('DP must be above 0'),
  unit: PressureUnitSchema,
  /** DP at 100 % flow, in `unit`: when given, the departure of the constant-C root is returned. */
  dpMax: num('DP at 100 % flow').positive().optional(),
  flowUnit: z.enum(FLOW_UNITS).optional(),
});
export type OrificeBody = z.infer<typeof OrificeBodySchema>;
