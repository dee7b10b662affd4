import express, { type NextFunction, type Request, type Response } from 'express';
import multer from 'multer';
import { AppError } from '../../../errors';

/** Largest CSV accepted for an import, bytes. */
export const CSV_LIMIT_BYTES = 2 * 1024 * 1024;

const upload = multer({ storage: multer.memoryStorage(), limits: { fileSize: CSV_LIMIT_BYTES, files: 1, fields: 5, parts: 6 } });
const rawText = express.text({ type: ['text/csv', 'text/plain', 'application/csv'], limit: CSV_LIMIT_BYTES });
const utf8 = new TextDecoder('utf-8', { fatal: true });

/**
 * Accepts a CSV three ways and leaves `{ csv, confirm }` in req.body for `validate`: a JSON body,
 * a multipart form with the file in `file` (and `confirm` as a field), or a text/csv body
 * (`?confirm=true`). A file must be UTF-8 text.
 */
export const csvBody = [
  upload.single('file'),
  rawText,
  (req: Request, _res: Response, next: NextFunction) => {
    if (req.file) {
      let csv: string;
      try {
        csv = utf8.decode(req.file.buffer);
      } catch {
        return next(new AppError(415, 'unsupported_media', 'The file is not UTF-8 text; save it as CSV (UTF-8) and try again'));
      }
      if (csv.includes('\u0000')) return next(new AppError(415, 'unsupported_media', 'The file is not a CSV text file'));
      req.body = { ...(req.body ?? {}), csv };
    } else if (typeof req.body === 'string') {
      req.body = { csv: req.body, confirm: req.query.confirm };
    }
    next();
  },
];
