/**
 * Uploads: multer writes the incoming file to a temp directory (with a size limit), then
 * `accept()` checks the bytes against the declared type and moves the file into the store. The
 * temp file is removed in every case, so a refused upload leaves nothing behind.
 *
 * Wiring (the route is the lead's): `router.post(path, uploads.single('file'), async (req, res) => {
 * const stored = await uploads.accept(req.file, req.body.type) ... })`; pass multer's own errors
 * through {@link toUploadError} in the error middleware so they become 413 / 400.
 */
import { randomBytes } from 'node:crypto';
import fs from 'node:fs';
import fsp from 'node:fs/promises';
import multer from 'multer';
import { AppError } from '../errors';
import type { FileStore, PutResult } from './file-store';
import { checkUpload } from './sniff';

/** Default largest upload: 10 MiB. */
export const DEFAULT_UPLOAD_LIMIT_BYTES = 10 * 1024 * 1024;

/** Why an upload was refused. */
export type UploadRefusal = 'too_large' | 'type_mismatch' | 'unsupported_type' | 'no_file' | 'too_many_parts';

/**
 * An upload refused for a reason the client can act on. Extends AppError, so the error middleware
 * renders it: 413 `payload_too_large`, 415 `unsupported_media`, or 400 `bad_request`.
 * `reason` is the finer cause.
 */
export class UploadRejectedError extends AppError {
  constructor(
    readonly reason: UploadRefusal,
    message: string,
  ) {
    const [status, code] =
      reason === 'too_large'
        ? ([413, 'payload_too_large'] as const)
        : reason === 'type_mismatch' || reason === 'unsupported_type'
          ? ([415, 'unsupported_media'] as const)
          : ([400, 'bad_request'] as const);
    super(status, code, message);
    this.name = 'UploadRejectedError';
  }
}

/**
 * Map an error raised by the multer middleware to an {@link UploadRejectedError}; other errors
 * come back undefined (and stay 500s).
 */
export function toUploadError(err: unknown, maxBytes = DEFAULT_UPLOAD_LIMIT_BYTES): UploadRejectedError | undefined {
  if (err instanceof UploadRejectedError) return err;
  if (!(err instanceof multer.MulterError)) return undefined;
  switch (err.code) {
    case 'LIMIT_FILE_SIZE':
      return new UploadRejectedError('too_large', `The file is larger than ${formatBytes(maxBytes)}`);
    case 'LIMIT_FILE_COUNT':
    case 'LIMIT_UNEXPECTED_FILE':
      return new UploadRejectedError('too_many_parts', 'Send exactly one file, in the expected field');
    default:
      return new UploadRejectedError('too_many_parts', `The upload form was refused: ${err.message}`);
  }
}

function formatBytes(n: number): string {
  return n % (1024 * 1024) === 0 ? `${n / (1024 * 1024)} MiB` : `${n} bytes`;
}

/** Options of {@link createUploads}. */
export interface UploadOptions {
  /** Directory for temp files (created when missing); not served, not the store. */
  tmpDir: string;
  store: FileStore;
  /** Largest file in bytes; default 10 MiB. */
  maxBytes?: number;
}

/** The multer instance plus the accept step. */
export interface Uploads {
  /** Configured multer (disk storage in `tmpDir`, one file, size limit). */
  multer: multer.Multer;
  /** Largest accepted file in bytes. */
  maxBytes: number;
  /** {@link acceptUpload} bound to this store and limit. */
  accept(file: Express.Multer.File | undefined, declaredType?: string): Promise<PutResult>;
}

/** Build the upload pieces. */
export function createUploads(options: UploadOptions): Uploads {
  const maxBytes = options.maxBytes ?? DEFAULT_UPLOAD_LIMIT_BYTES;
  fs.mkdirSync(options.tmpDir, { recursive: true });
  const storage = multer.diskStorage({
    destination: options.tmpDir,
    // Our own random name: the client's name never reaches the file system.
    filename: (_req, _file, cb) => cb(null, `${randomBytes(16).toString('hex')}.upload`),
  });
  const instance = multer({
    storage,
    // RFC 7578 §4.2: a file name is sent as UTF-8 by browsers; busboy's default reads it as latin1.
    defParamCharset: 'utf8',
    limits: { fileSize: maxBytes, files: 1, fields: 20, fieldSize: 64 * 1024, parts: 24 },
  });
  return {
    multer: instance,
    maxBytes,
    accept: (file, declaredType) => acceptUpload(options.store, file, declaredType, maxBytes),
  };
}

/**
 * Check a file multer has written and store it. The declared type is `declaredType` when given
 * (a form field), otherwise the part's own Content-Type. The temp file is removed whatever happens.
 * @throws UploadRejectedError for no file, an oversized file, or content that fails the check
 */
export async function acceptUpload(
  store: FileStore,
  file: Express.Multer.File | undefined,
  declaredType?: string,
  maxBytes = DEFAULT_UPLOAD_LIMIT_BYTES,
): Promise<PutResult> {
  if (!file) throw new UploadRejectedError('no_file', 'No file was sent');
  try {
    if (!file.path) throw new Error('acceptUpload needs multer disk storage (file.path is missing)');
    const st = await fsp.stat(file.path);
    if (st.size > maxBytes) throw new UploadRejectedError('too_large', `The file is larger than ${formatBytes(maxBytes)}`);
    // Read it whole: text is only accepted when every byte is valid UTF-8, and the size is bounded.
    const bytes = await fsp.readFile(file.path);
    const declared = declaredType ?? file.mimetype;
    const check = checkUpload({ declaredType: declared, bytes });
    if (!check.ok) throw new UploadRejectedError(check.code, check.message);
    return await store.put(bytes, { declaredType: check.type, originalName: file.originalname });
  } finally {
    await fsp.rm(file.path, { force: true }).catch(() => {});
  }
}
