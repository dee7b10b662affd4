/**
 * The bench agent's store-and-forward queue on disk: every line is written as it is read, every
 * batch boundary as it is sealed, and the last settled batch number once the server has
 * acknowledged it, so the queue survives the agent's own restart (a kill included: writes go to
 * the operating system at once and are synced to the disk every `syncMs`) and hours without the
 * server. Segments whose batches are all settled are deleted; the forwarder's `maxLines` bounds
 * what is kept.
 *
 * Layout of the directory: `sender-id` (the queue's name to the server, made once), `settled` (the
 * last settled batch number) and `queue-<n>.log` segments, one record a line: `L{json}` a line
 * read, `B <batchSeq> <lines>` the last `<lines>` open lines became that batch. A torn last record
 * (a kill in the middle of a write) is ignored.
 */
import { randomBytes } from 'node:crypto';
import fs from 'node:fs';
import path from 'node:path';
import type { ForwardBatch, ForwardLine, ForwarderRestore, ForwarderStore } from '../../shared/protocol';

/** Options of {@link AgentQueue.open}. */
export interface AgentQueueOptions {
  dir: string;
  /** Segment size that starts a new segment at the next batch boundary, bytes. Default 4 MiB. */
  segmentBytes?: number;
  /** Interval of the disk sync, ms. Default 1 000. */
  syncMs?: number;
}

interface Segment {
  n: number;
  file: string;
  /** Highest batch number sealed in it (0: none). */
  lastBatch: number;
}

const SEG = /^queue-(\d+)\.log$/;

export class AgentQueue implements ForwarderStore {
  readonly senderId: string;
  readonly restore: ForwarderRestore;
  private readonly dir: string;
  private readonly segmentBytes: number;
  private segments: Segment[];
  private fd: number;
  private size: number;
  private settledSeq: number;
  private openLines = 0;
  private timer: NodeJS.Timeout | undefined;
  private closed = false;

  private constructor(o: AgentQueueOptions, senderId: string, restore: ForwarderRestore, segments: Segment[], settled: number) {
    this.dir = o.dir;
    this.segmentBytes = o.segmentBytes ?? 4 * 1024 * 1024;
    this.senderId = senderId;
    this.restore = restore;
    this.segments = segments;
    this.settledSeq = settled;
    this.openLines = restore.open.length;
    const last = segments.at(-1)!;
    this.fd = fs.openSync(last.file, 'a');
    this.size = fs.fstatSync(this.fd).size;
    const syncMs = o.syncMs ?? 1000;
    this.timer = setInterval(() => this.sync(), syncMs);
    this.timer.unref();
  }

  /** Opens (or creates) the queue in `dir` and reads what it kept. */
  static open(o: AgentQueueOptions): AgentQueue {
    fs.mkdirSync(o.dir, { recursive: true });
    const idFile = path.join(o.dir, 'sender-id');
    if (!fs.existsSync(idFile)) fs.writeFileSync(idFile, `agent-${randomBytes(9).toString('base64url')}`, { flag: 'wx' });
    const senderId = fs.readFileSync(idFile, 'utf8').trim();
    const settledFile = path.join(o.dir, 'settled');
    const settled = fs.existsSync(settledFile) ? Number(fs.readFileSync(settledFile, 'utf8').trim()) || 0 : 0;
    const segments: Segment[] = fs
      .readdirSync(o.dir)
      .map((f) => SEG.exec(f))
      .filter((m): m is RegExpExecArray => !!m)
      .map((m) => ({ n: Number(m[1]), file: path.join(o.dir, m[0]), lastBatch: 0 }))
      .sort((a, b) => a.n - b.n);
    const batches: ForwardBatch[] = [];
    let open: ForwardLine[] = [];
    let maxSeq = settled;
    for (const seg of segments) {
      const text = fs.readFileSync(seg.file, 'utf8');
      const records = text.split('\n');
      // The last element is '' after a complete record, or a torn record: either way not read.
      records.pop();
      for (const rec of records) {
        if (rec.startsWith('L')) {
          try {
            const v = JSON.parse(rec.slice(1)) as { d: ForwardLine['device']; r: string; w: number };
            open.push({ device: v.d, raw: v.r, wallMs: v.w });
          } catch {
            // a damaged record: skipped
          }
        } else if (rec.startsWith('B ')) {
          const [, seqText, countText] = rec.split(' ');
          const batchSeq = Number(seqText);
          const count = Math.min(Number(countText), open.length);
          const lines = open.splice(open.length - count, count);
          seg.lastBatch = Math.max(seg.lastBatch, batchSeq);
          maxSeq = Math.max(maxSeq, batchSeq);
          if (batchSeq > settled) batches.push({ batchSeq, lines });
          open = open.length ? open : [];
        }
      }
    }
    if (!segments.length) {
      const file = path.join(o.dir, 'queue-1.log');
      fs.writeFileSync(file, '');
      segments.push({ n: 1, file, lastBatch: 0 });
    }
    return new AgentQueue(o, senderId, { batches, open, nextSeq: maxSeq + 1 }, segments, settled);
  }

  line(l: ForwardLine): void {
    this.write(`L${JSON.stringify({ d: l.device, r: l.raw, w: l.wallMs })}\n`);
    this.openLines++;
  }

  sealed(b: ForwardBatch): void {
    this.write(`B ${b.batchSeq} ${b.lines.length}\n`);
    this.openLines = Math.max(0, this.openLines - b.lines.length);
    const cur = this.segments.at(-1)!;
    cur.lastBatch = b.batchSeq;
    // A new segment starts only at a batch boundary with no open lines, so a segment never splits a batch.
    if (this.size >= this.segmentBytes && this.openLines === 0) this.rotate();
  }

  settled(batchSeq: number): void {
    if (batchSeq <= this.settledSeq || this.closed) return;
    this.settledSeq = batchSeq;
    const tmp = path.join(this.dir, 'settled.tmp');
    fs.writeFileSync(tmp, String(batchSeq));
    fs.renameSync(tmp, path.join(this.dir, 'settled'));
    this.prune();
  }

  /** Deletes the segments whose every batch is settled (never the one being written). */
  private prune(): void {
    while (this.segments.length > 1 && this.segments[0]!.lastBatch <= this.settledSeq) {
      fs.rmSync(this.segments.shift()!.file, { force: true });
    }
  }

  /** Bytes on disk in the segments. */
  bytes(): number {
    return this.segments.reduce((n, s) => n + (fs.existsSync(s.file) ? fs.statSync(s.file).size : 0), 0);
  }

  /** Syncs the current segment to the disk. */
  sync(): void {
    if (this.closed) return;
    try {
      fs.fsyncSync(this.fd);
    } catch {
      // closed under us; the next write reports it
    }
  }

  close(): void {
    if (this.closed) return;
    clearInterval(this.timer);
    this.sync();
    this.closed = true;
    fs.closeSync(this.fd);
  }

  /** Drops the file handle without syncing (a crash, in tests): what was written stays, as after a kill. */
  abandon(): void {
    if (this.closed) return;
    clearInterval(this.timer);
    this.closed = true;
    fs.closeSync(this.fd);
  }

  private write(text: string): void {
    if (this.closed) return;
    const buf = Buffer.from(text);
    fs.writeSync(this.fd, buf);
    this.size += buf.length;
  }

  private rotate(): void {
    fs.fsyncSync(this.fd);
    fs.closeSync(this.fd);
    const n = this.segments.at(-1)!.n + 1;
    const file = path.join(this.dir, `queue-${n}.log`);
    this.fd = fs.openSync(file, 'a');
    this.size = 0;
    this.segments.push({ n, file, lastBatch: 0 });
    this.prune();
  }
}
