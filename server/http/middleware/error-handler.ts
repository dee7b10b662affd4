import type { NextFunction, Request, Response } from 'express';
import type { Logger } from 'pino';
import { AppError } from '../../errors';
import { isDiskFull } from '../../storage/file-store';
import { toUploadError } from '../../storage/upload';

/** Errors busboy (under multer) raises for a malformed multipart body; they carry no status of their own. */
const MALFORMED_MULTIPART = /^(Multipart: Boundary not found|Malformed part header|Malformed content type|Unexpected end of (form|file)|Missing Content-Type|Unsupported content type)/;

/** The one error middleware: every error becomes `{ error: { code, message, fields? } }`. */
export function errorHandler(logger: Logger) {
  // Express recognises error middleware by its four parameters.
  return (thrown: unknown, req: Request, res: Response, _next: NextFunction) => {
    // multer's own errors (size limit, extra files) become 413 / 400 upload refusals.
    const err = toUploadError(thrown) ?? thrown;
    let status = 500;
    let body: { code: string; message: string; fields?: Record<string, string[]> } = { code: 'internal', message: 'Something went wrong on the server' };
    const e = err as { status?: number; statusCode?: number; type?: string; message?: string; code?: string };
    if (err instanceof AppError) {
      status = err.status;
      body = { code: err.code, message: err.message, ...(err.fields ? { fields: err.fields } : {}) };
    } else if (isDiskFull(err)) {
      // RFC 4918 §11.5: 507 Insufficient Storage. The writers remove what they began, so nothing half-written stays.
      status = 507;
      body = { code: 'insufficient_storage', message: 'The server disk is full, so nothing was saved; tell your administrator' };
    } else if (e?.type === 'entity.parse.failed') {
      status = 400;
      body = { code: 'bad_request', message: 'The request body is not valid JSON' };
    } else if (e?.type === 'entity.too.large' || e?.code === 'LIMIT_FILE_SIZE') {
      status = 413;
      body = { code: 'payload_too_large', message: 'The request is too large' };
    } else if (e?.code === 'LIMIT_FIELD_VALUE') {
      status = 413;
      body = { code: 'payload_too_large', message: 'A form field is too large' };
    } else if ((err as Error)?.name === 'MulterError' || MALFORMED_MULTIPART.test(e?.message ?? '')) {
      // multer's limits (part, file and field counts, unexpected field) and busboy's parse errors are the client's.
      status = 400;
      body = { code: 'bad_request', message: `The upload form was refused: ${e.message}` };
    } else if (e?.type === 'encoding.unsupported' || e?.type === 'charset.unsupported') {
      status = 415;
      body = { code: 'unsupported_media', message: 'Unsupported encoding' };
    } else if (typeof (e?.status ?? e?.statusCode) === 'number' && (e.status ?? e.statusCode)! < 500) {
      status = (e.status ?? e.statusCode)!;
      body = { code: 'bad_request', message: e.message ?? 'Bad request' };
    }
    if (status === 507) logger.error({ err, method: req.method, url: req.originalUrl }, 'disk full');
    else if (status >= 500) logger.error({ err, method: req.method, url: req.originalUrl }, 'request failed');
    if (res.headersSent) return;
    res.status(status).json({ error: body });
  };
}
