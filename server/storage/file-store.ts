/**
 * Content-addressed file storage: each file is kept once under the SHA-256 of its bytes, at
 * `root/ab/cd/<sha256>` with a sidecar `<sha256>.json` for its type, size and original name.
 * The root must lie outside anything served as static content; files leave only through
 * `open()`, by id. Writes are atomic: a temp file in `root/.tmp`, fsync, then rename into place,
 * so a reader never sees half a file and a crash leaves at most a stray temp file.
 */
import { createHash, randomBytes } from 'node:crypto';
import { createReadStream, type ReadStream } from 'node:fs';
import nodeFs from 'node:fs/promises';
import path from 'node:path';

/** Metadata kept beside each stored file. */
export interface StoredFileMeta {
  /** SHA-256 of the content, 64 lower-case hex digits. */
  id: string;
  /** Size in bytes. */
  size: number;
  /** Content type as checked on upload, e.g. `application/pdf`. */
  type: string;
  /** The uploader's file name, sanitised (the sidecar keeps the first upload's; `put` returns this upload's). */
  originalName: string;
  /** When the content was first stored, ISO 8601 UTC. */
  storedAt: string;
}

/** Result of {@link FileStore.put}. */
export interface PutResult extends StoredFileMeta {
  /** False when the same content was already stored (nothing was written). */
  created: boolean;
  /** This upload's own name, sanitised, even when the content was stored before under another. */
  originalName: string;
}

/** A stored file opened for reading. */
export interface OpenedFile {
  meta: StoredFileMeta;
  stream: ReadStream;
}

/** The file store. */
export interface FileStore {
  readonly root: string;
  /**
   * Store content given as a buffer or as the path of a file to copy (the source is left in
   * place). Storing the same content again is a no-op that returns the existing metadata.
   */
  put(source: Buffer | string, info: { declaredType: string; originalName?: string }): Promise<PutResult>;
  /** Open a stored file; undefined when there is none with this id. Throws on a malformed id. */
  open(id: string): Promise<OpenedFile | undefined>;
  /** Metadata only; undefined when absent. Throws on a malformed id. */
  stat(id: string): Promise<StoredFileMeta | undefined>;
  /** Whether a file with this id is stored; false for a malformed id. */
  has(id: string): Promise<boolean>;
}

/** A file id that is not 64 lower-case hex digits (and so could name no stored file). */
export class InvalidFileIdError extends Error {
  readonly code = 'invalid_file_id';
  constructor(id: string) {
    super(`Not a file id: ${JSON.stringify(id.slice(0, 80))}`);
    this.name = 'InvalidFileIdError';
  }
}

const ID_PATTERN = /^[0-9a-f]{64}$/;

/** Whether `id` is a well-formed file id (64 lower-case hex digits). */
export function isFileId(id: unknown): id is string {
  return typeof id === 'string' && ID_PATTERN.test(id);
}

/**
 * A file name safe to show and to offer in Content-Disposition: last path segment only, control
 * characters and characters reserved on common file systems replaced, at most 200 characters.
 */
export function sanitizeFileName(name: string | undefined): string {
  const last = (name ?? '').normalize('NFC').split(/[/\\]/).pop() ?? '';
  const cleaned = last
    .replace(/[\p{Cc}\p{Cf}<>:"|?*]/gu, '_')
    .replace(/^[.\s]+/, '')
    .trim()
    .slice(0, 200);
  return cleaned || 'file';
}

/** True for the errors of a full disk or an exhausted quota. */
export function isDiskFull(err: unknown): boolean {
  const code = (err as { code?: unknown } | null)?.code;
  return code === 'ENOSPC' || code === 'EDQUOT';
}

async function fsyncPath(fs: typeof nodeFs, p: string, flags = 'r'): Promise<void> {
  const fh = await fs.open(p, flags);
  try {
    await fh.sync();
  } finally {
    await fh.close();
  }
}

/**
 * Create a store rooted at `root` (created when missing). `fs` replaces node:fs/promises (tests
 * inject a full disk with it).
 */
export function createFileStore(options: { root: string; now?: () => Date; fs?: typeof nodeFs }): FileStore {
  const fs = options.fs ?? nodeFs;
  const root = path.resolve(options.root);
  const tmpDir = path.join(root, '.tmp');
  const now = options.now ?? (() => new Date());

  const blobPath = (id: string) => path.join(root, id.slice(0, 2), id.slice(2, 4), id);
  const metaPath = (id: string) => `${blobPath(id)}.json`;
  const tempName = () => path.join(tmpDir, `${randomBytes(12).toString('hex')}.part`);

  const exists = async (p: string) =>
    fs.access(p).then(
      () => true,
      () => false,
    );

  const readMeta = async (id: string): Promise<StoredFileMeta | undefined> => {
    if (!isFileId(id)) throw new InvalidFileIdError(id);
    if (!(await exists(blobPath(id)))) return undefined;
    try {
      return JSON.parse(await fs.readFile(metaPath(id), 'utf8')) as StoredFileMeta;
    } catch {
      // The blob is there but its sidecar is lost: serve it as opaque bytes rather than hide it.
      const st = await fs.stat(blobPath(id));
      return { id, size: st.size, type: 'application/octet-stream', originalName: 'file', storedAt: st.mtime.toISOString() };
    }
  };

  /** Write `data` to `dest` atomically. */
  const writeAtomic = async (dest: string, data: string) => {
    const tmp = tempName();
    try {
      await fs.writeFile(tmp, data, { flag: 'wx' });
      await fsyncPath(fs, tmp);
      await fs.rename(tmp, dest);
    } catch (err) {
      await fs.rm(tmp, { force: true }).catch(() => {});
      throw err;
    }
  };

  return {
    root,
    async put(source, info) {
      await fs.mkdir(tmpDir, { recursive: true });
      const tmp = tempName();
      const hash = createHash('sha256');
      let size = 0;
      try {
        const out = await fs.open(tmp, 'wx');
        try {
          if (typeof source === 'string') {
            for await (const chunk of createReadStream(source)) {
              const b = chunk as Buffer;
              hash.update(b);
              size += b.length;
              await out.write(b);
            }
          } else {
            hash.update(source);
            size = source.length;
            await out.writeFile(source);
          }
          await out.sync();
        } finally {
          await out.close();
        }
        const id = hash.digest('hex');
        const dest = blobPath(id);
        const existing = await readMeta(id);
        if (existing) {
          await fs.rm(tmp, { force: true });
          return { ...existing, originalName: sanitizeFileName(info.originalName), created: false };
        }
        await fs.mkdir(path.dirname(dest), { recursive: true });
        const meta: StoredFileMeta = {
          id,
          size,
          type: info.declaredType,
          originalName: sanitizeFileName(info.originalName),
          storedAt: now().toISOString(),
        };
        // Sidecar first: a blob is only visible (has/open) once its metadata is in place.
        await writeAtomic(metaPath(id), JSON.stringify(meta));
        try {
          await fs.rename(tmp, dest);
        } catch (err) {
          // No blob: take the sidecar back too, so nothing half-stored remains.
          await fs.rm(metaPath(id), { force: true }).catch(() => {});
          throw err;
        }
        await fsyncPath(fs, path.dirname(dest)).catch(() => {});
        return { ...meta, created: true };
      } catch (err) {
        await fs.rm(tmp, { force: true }).catch(() => {});
        throw err;
      }
    },
    async open(id) {
      const meta = await readMeta(id);
      if (!meta) return undefined;
      return { meta, stream: createReadStream(blobPath(id)) };
    },
    stat: readMeta,
    async has(id) {
      return isFileId(id) && exists(blobPath(id));
    },
  };
}
