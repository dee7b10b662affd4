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
