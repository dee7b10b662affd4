import { z } from 'zod';

/**
 * Benches other than the server's own ports (`/api/benches`): bench agents, registered by a lead
 * or an admin with their own revocable token, and each signed-in user's browser bench (Web Serial).
 */

/** A bench id: lower-case letters, digits and hyphens, starting with a letter or digit. */
export const BenchIdSchema = z
  .string()
  .trim()
  .min(2, 'At least 2 characters')
  .max(40, 'At most 40 characters')
  .regex(/^[a-z0-9][a-z0-9-]*$/, 'Lower-case letters, digits and hyphens only');

/** The prefix of browser bench ids; a registered bench may not use it. */
export const BROWSER_BENCH_PREFIX = 'browser-';

/** The bench a signed-in user's browser feeds with Web Serial: one per user, bound to them. */
export function browserBenchIdOf(userId: string): string {
  return `${BROWSER_BENCH_PREFIX}${userId}`;
}

export const BenchRecordSchema = z.object({
  id: z.string(),
  kind: z.enum(['agent']),
  label: z.string(),
  /** First characters of the agent token, to tell tokens apart. */
  tokenHint: z.string(),
  createdAt: z.string(),
  createdBy: z.string().nullable(),
  revokedAt: z.string().nullable(),
  active: z.boolean(),
});
export type BenchRecord = z.infer<typeof BenchRecordSchema>;

export const BenchListSchema = z.object({
  items: z.array(BenchRecordSchema),
  /** This server's own bench (its ports or simulated rig). */
  localBenchId: z.string(),
  /** The signed-in user's browser bench, for roles that perform calibrations; else null. */
  browserBenchId: z.string().nullable(),
  /** Most benches that may be registered (active and revoked alike). */
  limit: z.number().int(),
});
export type BenchList = z.infer<typeof BenchListSchema>;

export const RegisterBenchBodySchema = z.object({
  id: BenchIdSchema,
  label: z.string().trim().min(1, 'Say where the bench is').max(120, 'At most 120 characters'),
});
export type RegisterBenchBody = z.infer<typeof RegisterBenchBodySchema>;

/** Reply to a registration: the token is shown this once and never again. */
export const RegisteredBenchSchema = z.object({ bench: BenchRecordSchema, token: z.string() });
export type RegisteredBench = z.infer<typeof RegisteredBenchSchema>;

export const BenchIdParamSchema = z.object({ id: z.string().max(80) });
