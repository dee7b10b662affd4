/**
 * Append-only sample journal. PGlite on Node does not fsync, so each batch is first appended here
 * and synced to disk; only then does it count as stored. At start-up the journal is read back and
 * whatever the database lacks is replayed, then the file is truncated.
 */
import fs from 'node:fs';
import path from 'node:path';

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

const pack = (r: JournalRow): Packed => [r.seq, r.benchId, r.device, r.runId, r.raw, r.value, r.unit, r.wallMs, r.monoMs];
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

/** The journal file: one JSON line per batch. A torn last line (crash mid-write) is ignored: it was never acknowledged. */
export class SampleJournal {
  readonly file: string;
  private handle: fs.promises.FileHandle | undefined;
  private bytes = 0;

  constructor(dir: string, name = 'samples.journal') {
    this.file = path.join(dir, name);
  }

  /** Rows in the journal now (start-up replay), in file order. */
  async read(): Promise<JournalRow[]> {
    let text: string;
    try {
      text = await fs.promises.readFile(this.file, 'utf8');
    } catch (e) {
      if ((e as NodeJS.ErrnoException).code === 'ENOENT') return [];
      throw e;
    }
    const rows: JournalRow[] = [];
    for (const line of text.split('\n')) {
      if (!line) continue;
      try {
        for (const p of JSON.parse(line) as Packed[]) rows.push(unpack(p));
      } catch {
        // Torn or partial line: the batch it held was never synced, hence never acknowledged.
      }
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
    if (!this.handle) throw new Error('journal is not open');
    const line = `${JSON.stringify(rows.map(pack))}\n`;
    await this.handle.write(line);
    await this.handle.datasync();
    this.bytes += Buffer.byteLength(line);
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
