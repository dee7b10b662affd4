import { z } from 'zod';
import { HartPointSchema } from './hart-job';
import { ReasonBodySchema } from './reason';
import { DECISIONS, FLOW_UNITS, type EvaluateOutput } from '../calc';

/** Kinds of run within a job (DESIGN.md §3.5–6). */
export const RUN_KINDS = ['mode-check', 'as-found', 'trim', 'as-left'] as const;
export const RunKindSchema = z.enum(RUN_KINDS);
export type RunKind = z.infer<typeof RunKindSchema>;

/** Point states, in order (DESIGN.md §3.5). */
export const POINT_STATES = ['waiting', 'approaching', 'settling', 'holding', 'captured'] as const;
export const PointStateSchema = z.enum(POINT_STATES);
export type PointState = z.infer<typeof PointStateSchema>;

/** Point flags (DESIGN.md §3.5). */
export const POINT_FLAGS = ['leak', 'overshoot', 'unstable', 'manual'] as const;
export const PointFlagSchema = z.enum(POINT_FLAGS);
export type PointFlag = z.infer<typeof PointFlagSchema>;

export const RUN_STATUSES = ['running', 'paused', 'complete', 'aborted'] as const;
export const RunStatusSchema = z.enum(RUN_STATUSES);

export const StartRunBodySchema = z.object({
  kind: RunKindSchema,
  /** Trim runs: which trim is being performed. */
  trim: z.enum(['zero-trim', 'lower-trim', 'span-trim']).optional(),
  /** Bench the run is captured on. Default the server's own bench ('bench-1'). Additive. */
  benchId: z.string().min(1).max(80).optional(),
});
export type StartRunBody = z.infer<typeof StartRunBodySchema>;

/** Body of a manual capture: the reason, kept with the point. */
export const ManualCaptureBodySchema = ReasonBodySchema;

/** Body of `POST /api/runs/:id/points/:index/redo`: why the point is measured again (optional; kept in the audit trail and on the certificate). */
export const RedoBodySchema = z.object({
  reason: z.string().trim().max(500).optional(),
});

export const TraceQuerySchema = z.object({
  /** Wall-clock ms since epoch, inclusive. */
  from: z.coerce.number().finite().optional(),
  to: z.coerce.number().finite().optional(),
  device: z.enum(['pressure', 'current']).optional(),
  limit: z.coerce.number().int().min(1).max(500_000).default(100_000),
});

/** Where a bench's samples came from: its own serial port, a registered bench agent, or a browser forwarding Web Serial (`id` the user). */
export const SampleSourceSchema = z.object({ kind: z.enum(['port', 'agent', 'browser']), id: z.string() });
export type SampleSource = z.infer<typeof SampleSourceSchema>;

/** A signed-in user, as named on a record. */
export const PersonRefSchema = z.object({ id: z.string(), email: z.string() });

/**
 * Who or what captured a point. `user`: a manual capture by that user. `bench`: a hands-free capture
 * by the bench's capture engine after the hold, with the source of the samples per device and the
 * run's performer (the technician who started the run).
 */
export const CapturedBySchema = z.discriminatedUnion('kind', [
  z.object({ kind: z.literal('user'), benchId: z.string(), user: PersonRefSchema }),
  z.object({
    kind: z.literal('bench'),
    benchId: z.string(),
    sources: z.object({ pressure: SampleSourceSchema.nullable(), current: SampleSourceSchema.nullable() }),
    performer: PersonRefSchema.nullable(),
  }),
]);
export type CapturedBy = z.infer<typeof CapturedBySchema>;

/** What a captured point holds: means over the hold window and how the hold went. */
export const PointCaptureSchema = z.object({
  appliedDp: z.number(),
  appliedDpSd: z.number(),
  measuredMa: z.number(),
  measuredMaSd: z.number(),
  n: z.number().int(),
  /** Hold window, wall-clock ms. */
  startMs: z.number(),
  endMs: z.number(),
  leakRatePctSpanPerMin: z.number().nullable(),
  manualReason: z.string().nullable(),
  /** Email of the user of a manual capture; null for a hands-free one (see `by`). */
  capturedBy: z.string().nullable(),
  /** Who or what captured the point (absent on captures stored before it was recorded). */
  by: CapturedBySchema.optional(),
  /**
   * Type A standard uncertainty of the mean error over the hold, mA, from the per-reading error
   * series with Zhang's (2006) effective number of observations (shared/calc hold.ts). Additive;
   * absent on captures made before it, and null where it could not be computed.
   */
  typeA: z
    .object({ uMa: z.number(), sdMa: z.number(), n: z.number(), nEff: z.number(), dof: z.number(), method: z.literal('zhang-2006-effective-n') })
    .nullable()
    .optional(),
  /**
   * Where the hold's readings came from: `port:<bench>` (this server's ports), `agent:<bench>` (a
   * registered bench agent), `browser:<user id>` (Web Serial), comma-separated. Absent on older captures.
   */
  capturedFrom: z.string().nullable().optional(),
  /**
   * Leak versus relaxation over the point's time in its window (shared/calc hold.ts, `TrendVerdict`):
   * `leak` is a trend at a near-constant rate (flagged `leak` only beyond the leak limit), `relaxation`
   * a decaying one. Rate in % of span per minute. Absent on older captures; null before three sub-windows.
   */
  trend: z
    .object({
      kind: z.enum(['none', 'relaxation', 'leak', 'undetermined']),
      ratePctSpanPerMin: z.number(),
      decayRatio: z.number().nullable(),
      windows: z.number().int(),
      subWindowMs: z.number(),
    })
    .nullable()
    .optional(),
  /** The HART device's digital PV and loop current over the hold, with the digital and D/A errors (hart-job.ts). Absent without HART. */
  hart: HartPointSchema.nullable().optional(),
});
export type PointCapture = z.infer<typeof PointCaptureSchema>;

export const RunPointSchema = z.object({
  index: z.number().int(),
  nominalPct: z.number(),
  basis: z.enum(['flow', 'dp']),
  dpPct: z.number(),
  targetDp: z.number(),
  expectedMa: z.number(),
  approach: z.enum(['up', 'down']),
  /** Capture window half-width, instrument unit. */
  window: z.number(),
  state: PointStateSchema,
  flags: z.array(PointFlagSchema),
  capture: PointCaptureSchema.nullable(),
  /** Latest warning text, if any. */
  warning: z.string().nullable(),
});
export type RunPoint = z.infer<typeof RunPointSchema>;

/* ---------- Evaluated results: the one contract for shared/calc `EvaluateOutput` ---------- */

/** Decision per point or overall (ILAC-G8 rules; `undecided` when the rule cannot decide). */
export const DecisionSchema = z.enum(DECISIONS);

/** Why a point is undecided, with the message shown beside it. */
export const UndecidedSchema = z.object({
  reason: z.enum(['uncertainty-unknown', 'tur-below-minimum', 'reading-out-of-range']),
  message: z.string(),
});

/** Basis of an error in % of output span: flow span for a rooted output, else DP span. */
export const ErrorBasisSchema = z.enum(['flow-span', 'dp-span']);

/** One evaluated point (shared/calc `EvaluatePoint`). % of span figures are on the run's `errorBasis`. */
export const ResultPointSchema = z.object({
  index: z.number().int(),
  nominalPct: z.number(),
  basis: z.enum(['flow', 'dp']),
  direction: z.enum(['up', 'down']),
  /** Mean applied DP, instrument unit. */
  appliedDp: z.number(),
  appliedDpPct: z.number(),
  /** Flow % from the actual applied DP; null for a linear instrument. */
  appliedFlowPct: z.number().nullable(),
  expectedMa: z.number(),
  measuredMa: z.number(),
  /** (I_meas − I_exp)/16 mA × 100, % of output span. */
  errorPctSpan: z.number(),
  /** Absent on results computed before the basis was stored. */
  errorBasis: ErrorBasisSchema.optional(),
  /** DP-equivalent error, instrument unit; null inside a clamp cutoff. */
  dpEquivalentError: z.number().nullable(),
  /** Expanded uncertainty U = k·u_c, % of output span; null when it cannot be computed. */
  expandedUncertaintyPctSpan: z.number().nullable(),
  expandedUncertaintyMa: z.number().nullable(),
  /** Coverage factor of U: t_p(ν_eff), or the site's fixed k; null without U. */
  coverageFactor: z.number().nullable(),
  /** Coverage probability k was computed for, 0–1; null when the site fixes k. */
  coverageProbability: z.number().nullable().optional(),
  /** Welch–Satterthwaite ν_eff; null when infinite (every term Type B) or without U. */
  effectiveDof: z.number().nullable(),
  tur: z.number().nullable(),
  decision: DecisionSchema,
  /** Set when `decision` is undecided; absent on results computed before it existed. */
  undecided: UndecidedSchema.nullable().optional(),
  /** Acceptance limit ± % of span (tolerance minus guard band); null when the guard band is unknown. */
  acceptanceLimitPctSpan: z.number().nullable(),
  conformanceProbability: z.number().nullable(),
  ne43: z.enum(['failure-low', 'undefined-low', 'saturation-low', 'measurement', 'saturation-high', 'undefined-high', 'failure-high']),
  /** Flow in engineering units at the applied DP (ISO 5167-2, orifice primary element); null or absent otherwise. */
  flow: z
    .object({
      flow: z.number(),
      unit: z.enum(FLOW_UNITS),
      C: z.number(),
      epsilon: z.number(),
      reD: z.number(),
      pureRootDeparturePct: z.number().nullable(),
      warnings: z.array(z.string()),
    })
    .nullable()
    .optional(),
});
export type ResultPoint = z.infer<typeof ResultPointSchema>;

/** Hysteresis at one nominal: error up − error down, % of output span (signed). */
export const HysteresisResultSchema = z.object({
  nominalPct: z.number(),
  basis: z.enum(['flow', 'dp']),
  hysteresisPctSpan: z.number(),
  upErrorPctSpan: z.number().optional(),
  downErrorPctSpan: z.number().optional(),
});

const LinearityFigureSchema = z.object({
  pctSpan: z.number(),
  atOutputPct: z.number(),
  atNominalPct: z.number(),
  line: z.object({ offsetPctSpan: z.number(), slope: z.number() }),
});

/** ISA-51.1 non-linearity figures of the averaged error curve, and least squares under its own name. */
export const NonLinearitySchema = z.object({
  terminalBased: LinearityFigureSchema,
  zeroBased: LinearityFigureSchema,
  independent: LinearityFigureSchema,
  leastSquares: LinearityFigureSchema,
  anchorLowOutputPct: z.number(),
  anchorHighOutputPct: z.number(),
});

/** Non-linearity as stored before the ISA-51.1 figures (unsigned terminal-based and least squares). */
export const LegacyNonLinearitySchema = z.object({ terminalBasedPctSpan: z.number(), leastSquaresPctSpan: z.number() });

/**
 * Results of a run: shared/calc `evaluateCalibration` output, as stored and as served. Fields added
 * later are optional so that parsing a stored row returns it unchanged (a signed record's hash is
 * computed over what is stored).
 */
export const RunResultsSchema = z.object({
  points: z.array(ResultPointSchema),
  /** Absent on results computed before the basis was stored. */
  errorBasis: ErrorBasisSchema.optional(),
  hysteresis: z.array(HysteresisResultSchema),
  maxHysteresisPctSpan: z.number().nullable(),
  /** Null when fewer than two nominals; the legacy shape on results stored before the ISA-51.1 figures. */
  nonLinearity: z.union([NonLinearitySchema, LegacyNonLinearitySchema]).nullable(),
  worstError: z.object({ index: z.number().int(), errorPctSpan: z.number() }).nullable(),
  overallDecision: DecisionSchema,
});
export type RunResults = z.infer<typeof RunResultsSchema>;

/**
 * Parse a stored or received results value: null stays null; anything else must match the
 * contract (a mismatch throws, naming the first problem: stored results are never cast).
 */
export function parseRunResults(value: unknown): RunResults | null {
  if (value === null || value === undefined) return null;
  const r = RunResultsSchema.safeParse(value);
  if (!r.success) {
    const i = r.error.issues[0];
    throw new TypeError(`Stored results do not match the results contract: ${i?.path.join('.') ?? ''} ${i?.message ?? ''}`.trim());
  }
  return r.data;
}

// The calc engine's output is a valid value of the contract, checked by the compiler.
const _engineFitsContract = (v: EvaluateOutput): z.input<typeof RunResultsSchema> => v;
void _engineFitsContract;

export const RunSchema = z.object({
  id: z.string(),
  jobId: z.string(),
  kind: RunKindSchema,
  trim: z.string().nullable(),
  status: RunStatusSchema,
  unit: z.string(),
  holdSeconds: z.number(),
  currentIndex: z.number().int().nullable(),
  points: z.array(RunPointSchema),
  /** Results of shared/calc `evaluateCalibration` over the captured points (null until any is captured). */
  results: RunResultsSchema.nullable(),
  /** Mode-check finding. */
  modeCheck: z
    .object({ measuredMa: z.number(), finding: z.enum(['root-in-transmitter', 'linear-output', 'cannot-tell']), matchesRegister: z.boolean() })
    .nullable(),
  startedAt: z.string(),
  endedAt: z.string().nullable(),
  /** Bench the run is captured on. Additive. */
  benchId: z.string().optional(),
  /** Why `results` is null although points were captured (e.g. no standards chosen). Additive. */
  resultsProblem: z.string().nullable().optional(),
});
export type Run = z.infer<typeof RunSchema>;

export const TraceSampleSchema = z.object({
  seq: z.number(),
  device: z.enum(['pressure', 'current']),
  wallMs: z.number(),
  value: z.number().nullable(),
  unit: z.string().nullable(),
  raw: z.string(),
});
export type TraceSample = z.infer<typeof TraceSampleSchema>;
