import fs from 'node:fs/promises';
import type { Server } from 'node:http';
import type { AddressInfo } from 'node:net';
import os from 'node:os';
import path from 'node:path';
import express, { type NextFunction, type Request, type Response } from 'express';
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import pino from 'pino';
import { AppError } from '../errors';
import { errorHandler } from '../http/middleware/error-handler';
import { createFileStore } from './file-store';
import { tinyPdf, tinyPng } from '../../tests/fixtures/test-files';
import { createUploads, toUploadError, UploadRejectedError } from './upload';

let dir: string;
let tmpDir: string;
let server: Server;
let base: string;

/** A throwaway Express app with one upload route, wired the way the lead will wire it. */
async function startApp(maxBytes?: number) {
  const store = createFileStore({ root: path.join(dir, 'files') });
  const uploads = createUploads({ tmpDir, store, ...(maxBytes ? { maxBytes } : {}) });
  const app = express();
  app.post('/upload', uploads.multer.single('file'), async (req: Request, res: Response) => {
    const stored = await uploads.accept(req.file, typeof req.body?.type === 'string' ? req.body.type : undefined);
    res.status(201).json(stored);
  });
  app.use((err: unknown, _req: Request, res: Response, _next: NextFunction) => {
    const e = toUploadError(err, uploads.maxBytes) ?? err;
    if (e instanceof AppError) res.status(e.status).json({ error: { code: e.code, message: e.message, reason: (e as UploadRejectedError).reason } });
    else res.status(500).json({ error: { code: 'internal', message: String(err) } });
  });
  server = await new Promise<Server>((resolve) => {
    const s = app.listen(0, '127.0.0.1', () => resolve(s));
  });
  base = `http://127.0.0.1:${(server.address() as AddressInfo).port}`;
  return store;
}

async function post(bytes: Buffer, type: string, name: string, declaredField?: string) {
  const form = new FormData();
  if (declaredField) form.append('type', declaredField);
  form.append('file', new Blob([new Uint8Array(bytes)], { type }), name);
  const res = await fetch(`${base}/upload`, { method: 'POST', body: form });
  return { status: res.status, body: (await res.json()) as Record<string, unknown> & { error?: { code: string; reason?: string } } };
}

async function filesUnder(root: string): Promise<string[]> {
  const entries = await fs.readdir(root, { recursive: true, withFileTypes: true }).catch(() => []);
  return entries.filter((e) => e.isFile()).map((e) => e.name);
}

beforeEach(async () => {
  dir = await fs.mkdtemp(path.join(os.tmpdir(), 'stillpoint-upload-'));
  tmpDir = path.join(dir, 'tmp');
});
afterEach(async () => {
  await new Promise<void>((r) => server?.close(() => r()));
  await fs.rm(dir, { recursive: true, force: true });
});

describe('uploads through multer', () => {
  it('accepts a PDF and a PNG, stores them, and leaves no temp file', async () => {
    const store = await startApp();
    const a = await post(tinyPdf(), 'application/pdf', 'cert.pdf');
    expect(a.status).toBe(201);
    expect(a.body).toMatchObject({ type: 'application/pdf', originalName: 'cert.pdf', created: true });
    const b = await post(tinyPng(), 'image/png', 'plate.png');
    expect(b.status).toBe(201);
    expect(await store.has(String(b.body.id))).toBe(true);
    expect(await filesUnder(tmpDir)).toEqual([]);
  });

  it('refuses a PNG declared as PDF with 415, and nothing is kept', async () => {
    await startApp();
    const r = await post(tinyPng(), 'application/pdf', 'not-really.pdf');
    expect(r.status).toBe(415);
    expect(r.body.error).toMatchObject({ code: 'unsupported_media', reason: 'type_mismatch' });
    expect(await filesUnder(tmpDir)).toEqual([]);
    expect(await filesUnder(path.join(dir, 'files'))).toEqual([]);
  });

  it('takes the declared type from a form field when one is sent', async () => {
    await startApp();
    const r = await post(Buffer.from('tag,lrv,urv\nFT-101,0,2500\n'), 'application/octet-stream', 'tags.csv', 'text/csv');
    expect(r.status).toBe(201);
    expect(r.body.type).toBe('text/csv');
  });

  it('refuses an oversized file with 413 while streaming, and the temp dir and store stay empty', async () => {
    await startApp(64 * 1024);
    const big = Buffer.concat([tinyPdf(), Buffer.alloc(200 * 1024, 0x20)]);
    const r = await post(big, 'application/pdf', 'big.pdf');
    expect(r.status).toBe(413);
    expect(r.body.error).toMatchObject({ code: 'payload_too_large', reason: 'too_large', message: 'The file is larger than 65536 bytes' });
    expect(await filesUnder(tmpDir)).toEqual([]);
    expect(await filesUnder(path.join(dir, 'files'))).toEqual([]);
  });

  it('refuses a request without a file with 400', async () => {
    await startApp();
    const form = new FormData();
    form.append('type', 'application/pdf');
    const res = await fetch(`${base}/upload`, { method: 'POST', body: form });
    expect(res.status).toBe(400);
  });
});

describe('UploadRejectedError', () => {
  it('maps reasons to HTTP statuses and stable codes', () => {
    expect(new UploadRejectedError('too_large', 'x')).toMatchObject({ status: 413, code: 'payload_too_large' });
    expect(new UploadRejectedError('type_mismatch', 'x')).toMatchObject({ status: 415, code: 'unsupported_media' });
    expect(new UploadRejectedError('unsupported_type', 'x')).toMatchObject({ status: 415, code: 'unsupported_media' });
    expect(new UploadRejectedError('no_file', 'x')).toMatchObject({ status: 400, code: 'bad_request' });
    expect(toUploadError(new Error('other'))).toBeUndefined();
  });
});

describe('a full disk', () => {
  /** node:fs/promises with ENOSPC injected: after `partial` bytes of the file the fault names (blob or sidecar), or on renaming the blob. */
  function fullDiskFs(where: 'blob' | 'sidecar' | 'rename'): typeof fs {
    const enospc = () => Object.assign(new Error('ENOSPC: no space left on device, write'), { code: 'ENOSPC', errno: -28, syscall: 'write' });
    return {
      ...fs,
      open: (async (p: string, flags?: string) => {
        const fh = await fs.open(p, flags);
        if (where !== 'blob') return fh;
        return new Proxy(fh, {
          get(target, key) {
            if (key === 'writeFile' || key === 'write')
              return async () => {
                await target.write(Buffer.from('half a file'));
                throw enospc();
              };
            const v = Reflect.get(target, key) as unknown;
            return typeof v === 'function' ? v.bind(target) : v;
          },
        });
      }) as typeof fs.open,
      writeFile: (async (p: string, data: string, o: object) => {
        if (where === 'sidecar' && String(p).endsWith('.part')) {
          await fs.writeFile(p, data.slice(0, 5), o);
          throw enospc();
        }
        return fs.writeFile(p, data, o);
      }) as typeof fs.writeFile,
      rename: (async (a: string, b: string) => {
        if (where === 'rename' && !b.endsWith('.json')) throw Object.assign(new Error('ENOSPC: no space left on device, rename'), { code: 'ENOSPC' });
        return fs.rename(a, b);
      }) as typeof fs.rename,
    };
  }

  it.each(['blob', 'sidecar', 'rename'] as const)('answers 507 with a plain message when the %s write hits ENOSPC, and leaves nothing half-written', async (where) => {
    const root = path.join(dir, 'files');
    const store = createFileStore({ root, fs: fullDiskFs(where) });
    const uploads = createUploads({ tmpDir, store });
    const app = express();
    app.post('/upload', uploads.multer.single('file'), async (req: Request, res: Response) => {
      res.status(201).json(await uploads.accept(req.file));
    });
    app.use(errorHandler(pino({ level: 'silent' })));
    server = await new Promise<Server>((resolve) => {
      const s = app.listen(0, '127.0.0.1', () => resolve(s));
    });
    base = `http://127.0.0.1:${(server.address() as AddressInfo).port}`;
    const r = await post(tinyPdf(), 'application/pdf', 'cert.pdf');
    expect(r.status).toBe(507);
    expect(r.body.error).toEqual({ code: 'insufficient_storage', message: 'The server disk is full, so nothing was saved; tell your administrator' });
    expect(await filesUnder(root)).toEqual([]);
    expect(await filesUnder(tmpDir)).toEqual([]);
  });
});

describe('file names', () => {
  it('keeps a UTF-8 multipart file name as sent (not read as latin1), and each upload of shared content keeps its own name', async () => {
    await startApp();
    const a = await post(tinyPdf(), 'application/pdf', 'Kalibrierschein-Größe-µ.pdf');
    expect(a.body).toMatchObject({ originalName: 'Kalibrierschein-Größe-µ.pdf', created: true });
    const b = await post(tinyPdf(), 'application/pdf', '校正証明書.pdf');
    expect(b.body).toMatchObject({ id: a.body.id, originalName: '校正証明書.pdf', created: false });
  });
});
