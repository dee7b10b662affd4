import type { z } from 'zod';
import { ErrorBodySchema, type ErrorCode } from '../../shared/schemas/errors';

/** Codes the client adds for failures that never reached a JSON error body. */
export type ClientErrorCode = 'network' | 'bad_response';

/** An HTTP failure with the server's stable code, message and per-field messages. */
export class ApiError extends Error {
  override readonly name = 'ApiError';
  readonly status: number;
  readonly code: ErrorCode | ClientErrorCode;
  /** Field path (dot-joined) → messages; present on validation errors. */
  readonly fields: Record<string, string[]> | undefined;

  constructor(init: { status: number; code: ErrorCode | ClientErrorCode; message: string; fields?: Record<string, string[]> }) {
    super(init.message);
    this.status = init.status;
    this.code = init.code;
    this.fields = init.fields;
  }

  /** First message for a field path, if any. */
  fieldMessage(path: string): string | undefined {
    return this.fields?.[path]?.[0];
  }
}

export function isApiError(e: unknown): e is ApiError {
  return e instanceof ApiError;
}

/** Fallback code when a failed reply carries no usable error body. */
function codeForStatus(status: number): ErrorCode {
  switch (status) {
    case 400:
      return 'bad_request';
    case 401:
      return 'unauthenticated';
    case 403:
      return 'forbidden';
    case 404:
      return 'not_found';
    case 409:
      return 'conflict';
    case 413:
      return 'payload_too_large';
    case 415:
      return 'unsupported_media';
    case 423:
      return 'locked';
    case 429:
      return 'rate_limited';
    default:
      return 'internal';
  }
}

async function readJson(res: Response): Promise<unknown> {
  const text = await res.text();
  if (!text) return undefined;
  try {
    return JSON.parse(text) as unknown;
  } catch {
    return undefined;
  }
}

/** Turn a failed Response into an ApiError, using the `{ error: { code, message, fields? } }` body when present. */
export async function toApiError(res: Response): Promise<ApiError> {
  const body = await readJson(res);
  const parsed = ErrorBodySchema.safeParse(body);
  if (parsed.success) {
    const { code, message, fields } = parsed.data.error;
    return new ApiError({ status: res.status, code, message, ...(fields ? { fields } : {}) });
  }
  return new ApiError({
    status: res.status,
    code: codeForStatus(res.status),
    message: res.statusText ? `Request failed: ${res.status} ${res.statusText}` : `Request failed with status ${res.status}`,
  });
}

export interface RequestOptions<S extends z.ZodType | undefined> {
  method?: 'GET' | 'POST' | 'PATCH' | 'PUT' | 'DELETE';
  body?: unknown;
  /** When given, the reply is checked against this schema and the parsed value returned. */
  schema?: S;
  signal?: AbortSignal;
}

type Result<S> = S extends z.ZodType ? z.infer<S> : unknown;

/**
 * Fetch JSON from our own origin. Sends cookies (same-origin only), JSON in and out;
 * a non-2xx reply throws ApiError; 204 resolves to undefined.
 */
export async function apiRequest<S extends z.ZodType | undefined = undefined>(
  path: string,
  opts: RequestOptions<S> = {},
): Promise<Result<S>> {
  const headers: Record<string, string> = { Accept: 'application/json' };
  const init: RequestInit = { method: opts.method ?? 'GET', credentials: 'same-origin', headers };
  if (opts.body !== undefined) {
    headers['Content-Type'] = 'application/json';
    init.body = JSON.stringify(opts.body);
  }
  if (opts.signal) init.signal = opts.signal;

  let res: Response;
  try {
    res = await fetch(path, init);
  } catch (e) {
    if (e instanceof DOMException && e.name === 'AbortError') throw e;
    throw new ApiError({ status: 0, code: 'network', message: 'Cannot reach the Stillpoint server. Check the connection and try again.' });
  }

  if (!res.ok) throw await toApiError(res);
  if (res.status === 204) return undefined as Result<S>;

  const body = await readJson(res);
  if (!opts.schema) return body as Result<S>;
  const parsed = opts.schema.safeParse(body);
  if (!parsed.success) {
    throw new ApiError({
      status: res.status,
      code: 'bad_response',
      message: `Unexpected reply from ${path}: ${parsed.error.issues[0]?.message ?? 'does not match the contract'}`,
    });
  }
  return parsed.data as Result<S>;
}

export const api = {
  get: <S extends z.ZodType | undefined = undefined>(path: string, opts?: Omit<RequestOptions<S>, 'method' | 'body'>) =>
    apiRequest<S>(path, { ...opts, method: 'GET' }),
  post: <S extends z.ZodType | undefined = undefined>(path: string, body?: unknown, opts?: Omit<RequestOptions<S>, 'method' | 'body'>) =>
    apiRequest<S>(path, { ...opts, method: 'POST', body }),
  patch: <S extends z.ZodType | undefined = undefined>(path: string, body?: unknown, opts?: Omit<RequestOptions<S>, 'method' | 'body'>) =>
    apiRequest<S>(path, { ...opts, method: 'PATCH', body }),
  delete: <S extends z.ZodType | undefined = undefined>(path: string, opts?: Omit<RequestOptions<S>, 'method' | 'body'>) =>
    apiRequest<S>(path, { ...opts, method: 'DELETE' }),
};
