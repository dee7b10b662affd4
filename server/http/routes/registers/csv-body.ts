import express, { type NextFunction, type Request, type Response } from 'express';
import multer from 'multer';
import { AppError } from '../../../errors';

/** Largest CSV accepted for an import, bytes. */
export const CSV_LIMIT_BYTES = 2 * 1024 * 1024;

const upload = multer({ storage: multer.memoryStorage(), defParamCharset: 'utf8', limits: { fileSize: CSV_LIMIT_BYTES, files: 1, fields: 5, parts: 6 } });
// Raw bytes, decoded below with the fatal UTF-8 decoder: express.text would turn invalid bytes into U+FFFD silently.
const rawText = express.raw({ type: ['text/csv', 'text/plain', 'application/csv'], limit: CSV_LIMIT_BYTES });
const utf8 = new TextDecoder('utf-8', { fatal: true });

/**
 * Accepts a CSV three ways and leaves `{ csv, confirm }` in req.body for `validate`: a JSON body,
 * a multipart form with the file in `file` (and `confirm` as a field), or a text/csv body
 * (`?confirm=true`). A file or text body must be valid UTF-8 (refused with 415 otherwise).
 */
export const csvBody = [
  upload.single('file'),
  rawText,
  (req: Request, _res: Response, next: NextFunction) => {
    const bytes = req.file?.buffer ?? (Buffer.isBuffer(req.body) ? req.body : undefined);
    if (bytes) {
      const charset = /charset\s*=\s*"?([^";\s]+)/i.exec(req.get('content-type') ?? '')?.[1]?.toLowerCase();
      if (!req.file && charset && charset !== 'utf-8' && charset !== 'utf8') {
        return next(new AppError(415, 'unsupported_media', 'Send the CSV as UTF-8 text'));
      }
      let csv: string;
      try {
        csv = utf8.decode(bytes);
      } catch {
        return next(new AppError(415, 'unsupported_media', 'The file is not UTF-8 text; save it as CSV (UTF-8) and try again'));
      }
      if (csv.includes('\u0000')) return next(new AppError(415, 'unsupported_media', 'The file is not a CSV text file'));
      req.body = req.file ? { ...(req.body ?? {}), csv } : { csv, confirm: req.query.confirm };
    }
    next();
  },
];
