/**
 * Append-only sample journal. PGlite on Node does not fsync, so each batch is first appended here
 * and synced to disk; only then does it count as stored. At start-up the journal is read back and
 * whatever the database lacks is replayed, then the file is truncated.
 *
 * A batch is a header line `#batch <bytes> <rows>` followed by exactly that many bytes of CSV
 * (samples-csv.ts, the same bytes the database's COPY reads). A batch cut short by a crash is
 * ignored: it was never synced, hence never acknowledged. Journals of the older form (one JSON
 * array per line) are still read.
 */
import fs from 'node:fs';
import path from 'node:path';
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
});

/** The journal file (format above). */
export class SampleJournal {
  readonly file: string;
  private handle: fs.promises.FileHandle | undefined;
  private bytes = 0;

  constructor(dir: string, name = 'samples.journal') {
    this.file = path.join(dir, name);
  }

  /** Rows in the journal now (start-up replay), in file order. */
  async read(): Promise<JournalRow[]> {
    let buf: Buffer;
    try {
      buf = await fs.promises.readFile(this.file);
    } catch (e) {
      if ((e as NodeJS.ErrnoException).code === 'ENOENT') return [];
      throw e;
    }
    const rows: JournalRow[] = [];
    let at = 0;
    while (at < buf.length) {
      const nl = buf.indexOf(0x0a, at);
      if (nl === -1) break; // torn header
      const line = buf.toString('utf8', at, nl);
      if (line.startsWith('[')) {
        // Older form: one JSON array of packed rows per line.
        try {
          for (const p of JSON.parse(line) as Packed[]) rows.push(unpack(p));
        } catch {
          // Torn or partial line: never synced, never acknowledged.
        }
        at = nl + 1;
        continue;
      }
      const m = /^#batch (\d+) (\d+)$/.exec(line);
      if (!m) break; // not a header: nothing after it can be trusted
      const bytes = Number(m[1]);
      const end = nl + 1 + bytes;
      if (end > buf.length) break; // torn batch
      try {
        const batch = parseSamplesCsv(buf.toString('utf8', nl + 1, end));
        if (batch.length !== Number(m[2])) break;
        rows.push(...batch);
      } catch {
        break;
      }
      at = end;
    }
    return rows;
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
    const header = Buffer.from(`#batch ${csv.byteLength} ${count}\n`);
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
