import type { ErrorCode } from '../shared/schemas/errors';

/** An error with a stable code and HTTP status; the error middleware renders it. */
export class AppError extends Error {
  constructor(
    readonly status: number,
    readonly code: ErrorCode,
    message: string,
    readonly fields?: Record<string, string[]>,
  ) {
    super(message);
    this.name = 'AppError';
  }
}

export const badRequest = (message: string, fields?: Record<string, string[]>) =>
  new AppError(400, fields ? 'validation_failed' : 'bad_request', message, fields);
export const unauthenticated = (message = 'Sign in first') => new AppError(401, 'unauthenticated', message);
export const forbidden = (message = 'Your role does not allow this') => new AppError(403, 'forbidden', message);
export const notFound = (what = 'Not found') => new AppError(404, 'not_found', what);
export const conflict = (message: string, fields?: Record<string, string[]>) => new AppError(409, 'conflict', message, fields);
export const locked = (message: string) => new AppError(423, 'locked', message);
