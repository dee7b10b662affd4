/**
 * Append-only sample journal. PGlite on Node does not fsync, so each batch is first appended here
 * and synced to disk; only then does it count as stored. At start-up the journal is read back and
 * whatever the database lacks is replayed, then the file is truncated.
 *
 * A batch is a header line `#batch <bytes> <rows> <crc32>` followed by exactly that many bytes of
 * CSV (samples-csv.ts, the same bytes the database's COPY reads); the CRC-32 (hex) covers those
 * bytes. A last batch cut short by a crash is ignored: it was never synced, hence never
 * acknowledged. A batch that fails its checksum or does not parse, anywhere else, is damage: at
 * start-up it is moved aside into a named file beside the journal (with a warning) and every
 * intact batch around it is still replayed; nothing is discarded silently. Journals of the older
 * forms (`#batch <bytes> <rows>` without a checksum, and one JSON array per line) are still read.
 */
import fs from 'node:fs';
import path from 'node:path';
import zlib from 'node:zlib';
import { parseSamplesCsv, samplesCsv } from './samples-csv';

/** One journaled sample row. */
export interface JournalRow {
  seq: number;
  benchId: string;
  device: string;
  runId: string | null;
  raw: string;
  value: number | null;
  unit: string | null;
  wallMs: number;
  monoMs: number;
  /** Who delivered the line (hub.ts SampleSource). */
  sourceKind: 'port' | 'agent' | 'browser';
  sourceId: string;
  /** The sender's own wall clock (forwarded lines), ms since epoch; null for local ports. */
  clientWallMs: number | null;
}

type Packed = [number, string, string, string | null, string, number | null, string | null, number, number];

const unpack = (p: Packed): JournalRow => ({
  seq: p[0],
  benchId: p[1],
  device: p[2],
  runId: p[3],
  raw: p[4],
  value: p[5],
  unit: p[6],
  wallMs: p[7],
  monoMs: p[8],
  sourceKind: 'port',
  sourceId: p[1],
  clientWallMs: null,
});

/** A stretch of the journal that is neither an intact batch nor a torn tail, as set aside. */
export interface DamagedBatch {
  /** The file the bytes were moved to (in the journal's directory), and its description beside it (`.json`). */
  file: string;
  /** Byte offset in the journal where the stretch began, and its length. */
  offset: number;
  bytes: number;
  reason: string;
  /** When it was set aside (ISO time). */
  at: string;
  /** Set once an admin or lead has reviewed it. */
  acknowledgedAt?: string;
  acknowledgedBy?: string;
}

/** What a read of the journal found. */
export interface JournalScan {
  rows: JournalRow[];
  /** Stretches that failed their checksum or did not parse, with intact batches after them. */
  damaged: { offset: number; bytes: Buffer; reason: string }[];
  /** Bytes of an incomplete last batch (a crash mid-write: never synced, never acknowledged). */
  tornBytes: number;
}

type BatchAt = { kind: 'ok'; rows: JournalRow[]; end: number } | { kind: 'torn' } | { kind: 'bad'; reason: string };

const HEADER = /^#batch (\d+) (\d+)(?: ([0-9a-f]{8}))?$/;
const crcHex = (b: Uint8Array) => zlib.crc32(b).toString(16).padStart(8, '0');

/** The batch (or older-form line) that starts at `at`. */
function batchAt(buf: Buffer, at: number): BatchAt {
  const nl = buf.indexOf(0x0a, at);
  if (nl === -1) return { kind: 'torn' }; // a header (or older-form line) cut short
  const line = buf.toString('utf8', at, nl);
  if (line.startsWith('[')) {
    // Older form: one JSON array of packed rows per line (written with its line break at once).
    try {
      return { kind: 'ok', rows: (JSON.parse(line) as Packed[]).map(unpack), end: nl + 1 };
    } catch {
      return { kind: 'bad', reason: 'an older-form journal line that does not parse' };
    }
  }
  const m = HEADER.exec(line);
  if (!m) return { kind: 'bad', reason: 'not a batch header' };
  const end = nl + 1 + Number(m[1]);
  if (end > buf.length) return { kind: 'torn' };
  const body = buf.subarray(nl + 1, end);
  if (m[3] !== undefined && crcHex(body) !== m[3]) return { kind: 'bad', reason: `checksum mismatch (header ${m[3]}, bytes ${crcHex(body)})` };
  try {
    const rows = parseSamplesCsv(body.toString('utf8'));
    if (rows.length !== Number(m[2])) return { kind: 'bad', reason: `${rows.length} rows where the header says ${m[2]}` };
    return { kind: 'ok', rows, end };
  } catch (e) {
    return { kind: 'bad', reason: `a batch that does not parse: ${(e as Error).message}` };
  }
}

/** The next offset after `from` where an intact batch starts, if any. */
function nextIntact(buf: Buffer, from: number): number | undefined {
  for (let p = buf.indexOf(0x0a, from); p !== -1 && p + 1 < buf.length; p = buf.indexOf(0x0a, p + 1)) {
    const c = buf[p + 1];
    if (c !== 0x23 /* # */ && c !== 0x5b /* [ */) continue;
    if (batchAt(buf, p + 1).kind === 'ok') return p + 1;
  }
  return undefined;
}

/**
 * Reads a journal's bytes: every intact batch, the damaged stretches between them, and a torn
 * tail. A stretch is torn (ignored) only when nothing intact follows it and it is the last write
 * cut short (its bytes run past the end, or end in the zeros of a block never written); anything
 * else that fails its checksum or does not parse is damage, kept for review.
 */
export function scanJournal(buf: Buffer): JournalScan {
  const out: JournalScan = { rows: [], damaged: [], tornBytes: 0 };
  let at = 0;
  while (at < buf.length) {
    const b = batchAt(buf, at);
    if (b.kind === 'ok') {
      for (const r of b.rows) out.rows.push(r);
      at = b.end;
      continue;
    }
    const next = nextIntact(buf, at + 1);
    if (next === undefined && (b.kind === 'torn' || (buf[buf.length - 1] === 0 && b.reason.startsWith('checksum')))) {
      out.tornBytes = buf.length - at;
      break;
    }
    out.damaged.push({ offset: at, bytes: buf.subarray(at, next ?? buf.length), reason: b.kind === 'torn' ? 'a batch whose length runs past the next intact batch' : b.reason });
    if (next === undefined) break;
    at = next;
  }
  return out;
}

/** The journal file (format above). */
export class SampleJournal {
  readonly file: string;
  private handle: fs.promises.FileHandle | undefined;
  private bytes = 0;

  constructor(dir: string, name = 'samples.journal') {
    this.file = path.join(dir, name);
  }

  /** The journal's directory (damaged batches are set aside there). */
  get dir(): string {
    return path.dirname(this.file);
  }

  private async contents(): Promise<Buffer> {
    try {
      return await fs.promises.readFile(this.file);
    } catch (e) {
      if ((e as NodeJS.ErrnoException).code === 'ENOENT') return Buffer.alloc(0);
      throw e;
    }
  }

  /** Rows in the journal now, in file order (intact batches only; changes nothing). */
  async read(): Promise<JournalRow[]> {
    return scanJournal(await this.contents()).rows;
  }

  /**
   * Start-up read: every intact batch's rows, with each damaged stretch first copied, synced, into
   * a file of its own beside the journal (`<journal>.damaged-<time>-<offset>`, its reason in a
   * `.json` beside it), so that truncating the journal afterwards destroys nothing.
   */
  async recover(): Promise<{ rows: JournalRow[]; damaged: DamagedBatch[]; tornBytes: number }> {
    const scan = scanJournal(await this.contents());
    const damaged: DamagedBatch[] = [];
    const stamp = new Date().toISOString().replaceAll(':', '-');
    for (const d of scan.damaged) {
      const file = `${this.file}.damaged-${stamp}-${d.offset}`;
      await writeSynced(file, d.bytes);
      const info: DamagedBatch = { file: path.basename(file), offset: d.offset, bytes: d.bytes.length, reason: d.reason, at: new Date().toISOString() };
      await writeSynced(`${file}.json`, Buffer.from(JSON.stringify(info, null, 2)));
      damaged.push(info);
    }
    if (damaged.length) await syncDir(this.dir);
    return { rows: scan.rows, damaged, tornBytes: scan.tornBytes };
  }

  /** Damaged stretches set aside in the journal's directory (by this start or earlier ones). */
  async damagedBatches(): Promise<DamagedBatch[]> {
    return listDamaged(this.dir, path.basename(this.file));
  }

  /** Marks every damaged stretch set aside so far as reviewed (the files stay). Returns how many it marked. */
  async acknowledgeDamaged(by: string): Promise<number> {
    let n = 0;
    for (const d of await this.damagedBatches()) {
      if (d.acknowledgedAt) continue;
      const info: DamagedBatch = { ...d, acknowledgedAt: new Date().toISOString(), acknowledgedBy: by };
      await writeSynced(path.join(this.dir, `${d.file}.json`), Buffer.from(JSON.stringify(info, null, 2)));
      n++;
    }
    return n;
  }

  /** Opens the file for appending. */
  async open(): Promise<void> {
    await fs.promises.mkdir(path.dirname(this.file), { recursive: true });
    this.handle = await fs.promises.open(this.file, 'a');
    this.bytes = (await this.handle.stat()).size;
  }

  /** Appends one batch and syncs it to disk; resolves when it is durable. */
  async append(rows: JournalRow[]): Promise<void> {
    await this.appendCsv(new TextEncoder().encode(samplesCsv(rows)), rows.length);
  }

  /** Appends one batch already in its CSV form ({@link samplesCsv}, `count` rows) and syncs it. */
  async appendCsv(csv: Uint8Array, count: number): Promise<void> {
    if (!this.handle) throw new Error('journal is not open');
    const header = Buffer.from(`#batch ${csv.byteLength} ${count} ${crcHex(csv)}\n`);
    await this.handle.writev([header, csv]);
    await this.handle.datasync();
    this.bytes += header.length + csv.byteLength;
  }

  /** Bytes in the file now. */
  get size(): number {
    return this.bytes;
  }

  /** Empties the journal (every row in it is in the database) and syncs that. */
  async truncate(): Promise<void> {
    if (!this.handle) {
      await fs.promises.rm(this.file, { force: true });
      return;
    }
    await this.handle.truncate(0);
    await this.handle.datasync();
    this.bytes = 0;
  }

  async close(): Promise<void> {
    await this.handle?.close();
    this.handle = undefined;
  }
}

async function writeSynced(file: string, bytes: Uint8Array): Promise<void> {
  const h = await fs.promises.open(file, 'w');
  try {
    await h.writeFile(bytes);
    await h.datasync();
  } finally {
    await h.close();
  }
}

/** Syncs a directory's entries (new files); not every platform allows it, so a refusal is ignored. */
async function syncDir(dir: string): Promise<void> {
  try {
    const h = await fs.promises.open(dir, 'r');
    try {
      await h.sync();
    } finally {
      await h.close();
    }
  } catch {
    /* best effort */
  }
}

/** The descriptions of damaged stretches set aside from journal `name` in `dir`, oldest first. */
export async function listDamaged(dir: string, name = 'samples.journal'): Promise<DamagedBatch[]> {
  let names: string[];
  try {
    names = await fs.promises.readdir(dir);
  } catch (e) {
    if ((e as NodeJS.ErrnoException).code === 'ENOENT') return [];
    throw e;
  }
  const out: DamagedBatch[] = [];
  for (const n of names.sort()) {
    if (!n.startsWith(`${name}.damaged-`) || !n.endsWith('.json')) continue;
    try {
      out.push(JSON.parse(await fs.promises.readFile(path.join(dir, n), 'utf8')) as DamagedBatch);
    } catch {
      // A description cut short: the bytes file is still there; report it by name.
      out.push({ file: n.slice(0, -'.json'.length), offset: -1, bytes: -1, reason: 'description unreadable', at: '' });
    }
  }
  return out;
}
