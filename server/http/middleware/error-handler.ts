import type { NextFunction, Request, Response } from 'express';
import type { Logger } from 'pino';
import { AppError } from '../../errors';

/** The one error middleware: every error becomes `{ error: { code, message, fields? } }`. */
export function errorHandler(logger: Logger) {
  // Express recognises error middleware by its four parameters.
  return (err: unknown, req: Request, res: Response, _next: NextFunction) => {
    let status = 500;
    let body: { code: string; message: string; fields?: Record<string, string[]> } = { code: 'internal', message: 'Something went wrong on the server' };
    const e = err as { status?: number; statusCode?: number; type?: string; message?: string; code?: string };
    if (err instanceof AppError) {
      status = err.status;
      body = { code: err.code, message: err.message, ...(err.fields ? { fields: err.fields } : {}) };
    } else if (e?.type === 'entity.parse.failed') {
      status = 400;
      body = { code: 'bad_request', message: 'The request body is not valid JSON' };
    } else if (e?.type === 'entity.too.large' || e?.code === 'LIMIT_FILE_SIZE') {
      status = 413;
      body = { code: 'payload_too_large', message: 'The request is too large' };
    } else if (e?.type === 'encoding.unsupported' || e?.type === 'charset.unsupported') {
      status = 415;
      body = { code: 'unsupported_media', message: 'Unsupported encoding' };
    } else if (typeof (e?.status ?? e?.statusCode) === 'number' && (e.status ?? e.statusCode)! < 500) {
      status = (e.status ?? e.statusCode)!;
      body = { code: 'bad_request', message: e.message ?? 'Bad request' };
    }
    if (status >= 500) logger.error({ err, method: req.method, url: req.originalUrl }, 'request failed');
    if (res.headersSent) return;
    res.status(status).json({ error: body });
  };
}
