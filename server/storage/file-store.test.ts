import { createHash } from 'node:crypto';
import fs from 'node:fs/promises';
import os from 'node:os';
import path from 'node:path';
import { text } from 'node:stream/consumers';
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { createFileStore, InvalidFileIdError, isFileId, sanitizeFileName, type FileStore } from './file-store';
import { tinyPdf } from '../../tests/fixtures/test-files';

let dir: string;
let store: FileStore;
beforeEach(async () => {
  dir = await fs.mkdtemp(path.join(os.tmpdir(), 'stillpoint-store-'));
  store = createFileStore({ root: path.join(dir, 'files'), now: () => new Date('2025-02-03T04:05:06Z') });
});
afterEach(async () => {
  await fs.rm(dir, { recursive: true, force: true });
});

const sha = (b: Buffer) => createHash('sha256').update(b).digest('hex');

/** Every file under a directory, relative paths. */
async function listFiles(root: string): Promise<string[]> {
  const entries = await fs.readdir(root, { recursive: true, withFileTypes: true }).catch(() => []);
  return entries.filter((e) => e.isFile()).map((e) => path.relative(root, path.join(e.parentPath, e.name)));
}

describe('file store', () => {
  it('stores a buffer under its SHA-256 with a sidecar, and reads it back', async () => {
    const pdf = tinyPdf();
    const id = sha(pdf);
    const put = await store.put(pdf, { declaredType: 'application/pdf', originalName: 'C:\\certs\\PC-77 cert.pdf' });
    expect(put).toEqual({ id, size: pdf.length, type: 'application/pdf', originalName: 'PC-77 cert.pdf', storedAt: '2025-02-03T04:05:06.000Z', created: true });
    expect(await listFiles(store.root)).toEqual([path.join(id.slice(0, 2), id.slice(2, 4), id), path.join(id.slice(0, 2), id.slice(2, 4), `${id}.json`)].sort());
    expect(await store.has(id)).toBe(true);
    const opened = await store.open(id);
    expect(opened?.meta).toMatchObject({ id, type: 'application/pdf', size: pdf.length });
    expect(await text(opened!.stream)).toBe(pdf.toString('latin1'));
  });

  it('stores from a file path, and the same content twice only once', async () => {
    const src = path.join(dir, 'upload.tmp');
    await fs.writeFile(src, 'tag,lrv\nFT-101,0\n');
    const a = await store.put(src, { declaredType: 'text/csv', originalName: 'first.csv' });
    const b = await store.put(Buffer.from('tag,lrv\nFT-101,0\n'), { declaredType: 'text/csv', originalName: 'second.csv' });
    expect(a.created).toBe(true);
    // Each upload keeps its own name; the sidecar keeps the first one's.
    expect(b).toMatchObject({ id: a.id, created: false, originalName: 'second.csv' });
    expect((await store.stat(a.id))?.originalName).toBe('first.csv');
    await expect(fs.access(src)).resolves.toBeUndefined();
    expect((await listFiles(store.root)).filter((f) => !f.startsWith('.tmp'))).toHaveLength(2);
    expect(await listFiles(path.join(store.root, '.tmp'))).toEqual([]);
  });

  it('refuses ids that are not 64 hex digits, so no path can escape the root', async () => {
    const bad = ['../x', '..%2f..%2fetc%2fpasswd', '..\\x', '/etc/passwd', 'a'.repeat(63), 'A'.repeat(64), `${'a'.repeat(64)}/../x`, `${'a'.repeat(64)}.json`, ''];
    for (const id of bad) {
      expect(isFileId(id)).toBe(false);
      expect(await store.has(id)).toBe(false);
      await expect(store.open(id)).rejects.toBeInstanceOf(InvalidFileIdError);
      await expect(store.stat(id)).rejects.toBeInstanceOf(InvalidFileIdError);
    }
    expect(await store.open('0'.repeat(64))).toBeUndefined();
  });

  it('sanitises original names', () => {
    expect(sanitizeFileName('../../etc/passwd')).toBe('passwd');
    expect(sanitizeFileName('a\u0000b\u202Egpj.exe')).toBe('a_b_gpj.exe');
    expect(sanitizeFileName('..')).toBe('file');
    expect(sanitizeFileName(undefined)).toBe('file');
    expect(sanitizeFileName('x'.repeat(300))).toHaveLength(200);
  });
});
