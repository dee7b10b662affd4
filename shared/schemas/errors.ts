import { z } from 'zod';

/** Stable error codes returned by every HTTP route in `{ error: { code, message, fields? } }`. */
export const ERROR_CODES = [
  'bad_request',
  'validation_failed',
  'unauthenticated',
  'forbidden',
  'not_found',
  'conflict',
  'rate_limited',
  'cross_site',
  'locked',
  'payload_too_large',
  'unsupported_media',
  'internal',
  /** The Host header names another server (DNS-rebinding guard), 421. */
  'wrong_host',
  /** A new password must be chosen first (after an invite or an admin reset), 403. */
  'password_change_required',
  /** Too many requests in flight; retry after the Retry-After header's seconds, 503. */
  'overloaded',
  /** The disk is full; nothing was kept, 507. */
  'insufficient_storage',
] as const;
export const ErrorCodeSchema = z.enum(ERROR_CODES);
export type ErrorCode = z.infer<typeof ErrorCodeSchema>;

export const ErrorBodySchema = z.object({
  error: z.object({
    code: ErrorCodeSchema,
    message: z.string(),
    /** Field path (dot-joined) → messages, for validation errors. */
    fields: z.record(z.string(), z.array(z.string())).optional(),
  }),
});
export type ErrorBody = z.infer<typeof ErrorBodySchema>;

/** Query of a paged register list. */
export const ListQuerySchema = z.object({
  q: z.string().trim().max(100).optional(),
  sort: z.string().max(40).optional(),
  dir: z.enum(['asc', 'desc']).default('asc'),
  page: z.coerce.number().int().min(1).max(100_000).default(1),
  pageSize: z.coerce.number().int().min(1).max(500).default(50),
});
export type ListQuery = z.infer<typeof ListQuerySchema>;
