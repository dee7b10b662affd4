import { z } from 'zod';

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

export const ManualCaptureBodySchema = z.object({
  reason: z.string().trim().min(5, 'Give a reason of at least 5 characters').max(500),
});

export const TraceQuerySchema = z.object({
  /** Wall-clock ms since epoch, inclusive. */
  from: z.coerce.number().finite().optional(),
  to: z.coerce.number().finite().optional(),
  device: z.enum(['pressure', 'current']).optional(),
  limit: z.coerce.number().int().min(1).max(500_000).default(100_000),
});

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
  capturedBy: z.string().nullable(),
  /**
   * Where the hold's readings came from: `port:<bench>` (this server's ports), `agent:<bench>` (a
   * registered bench agent), `browser:<user id>` (Web Serial), comma-separated. Absent on older captures.
   */
  capturedFrom: z.string().nullable().optional(),
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
  results: z.unknown().nullable(),
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
