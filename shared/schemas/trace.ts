import { z } from 'zod';

/** Query of the review trace: a window of a run (wall-clock ms); the whole run when omitted. */
export const ReviewTraceQuerySchema = z.object({
  from: z.coerce.number().finite().optional(),
  to: z.coerce.number().finite().optional(),
  /** Envelope buckets when the window holds more than `maxRaw` samples. */
  buckets: z.coerce.number().int().min(50).max(5000).default(1200),
  maxRaw: z.coerce.number().int().min(100).max(50_000).default(12_000),
});

const nums = z.array(z.number().nullable());

/**
 * A run's raw trace, both channels on one time axis (`x`, ms after `t0`), ready to draw. `raw`
 * mode carries every sample as received (one channel per x, the other null, with the line as
 * received); `envelope` mode carries min, mean and max per time bucket so spikes stay visible.
 */
export const ReviewTraceSchema = z.object({
  runId: z.string(),
  mode: z.enum(['raw', 'envelope']),
  t0: z.number(),
  from: z.number(),
  to: z.number(),
  /** Whole run span, ms since epoch (null without samples). */
  span: z.object({ from: z.number().nullable(), to: z.number().nullable() }),
  /** Samples in the window. */
  total: z.number().int(),
  bucketMs: z.number().nullable(),
  x: z.array(z.number()),
  dp: z.object({ v: nums, lo: nums.optional(), hi: nums.optional() }),
  ma: z.object({ v: nums, lo: nums.optional(), hi: nums.optional() }),
  /** Raw lines (raw mode only), aligned with x. */
  raw: z.array(z.string()).optional(),
});
export type ReviewTrace = z.infer<typeof ReviewTraceSchema>;
