/**
 * The one line-forwarding client, used by the bench agent and the browser's Web Serial bridge:
 * lines read from the instruments are gathered into batches numbered by the sender itself
 * (`batchSeq` from 1), sent as `lines.forwarded`, and kept until the server acknowledges them
 * (`lines.acked`, sent only once the lines are durably stored). After a reconnect every batch not
 * yet acknowledged is sent again with its own number; the server stores each number once, so the
 * effect is exactly once. At most `window` batches are unacknowledged on the link at a time, and
 * the queue is bounded (`maxLines`; the oldest batches go first, counted in `dropped`).
 *
 * Pure: no timers, no I/O. The owner calls `push` for each line, `tick` on an interval, `linkUp`
 * and `linkDown` as the connection comes and goes, and `acked` for each acknowledgement; a `store`
 * (the agent's disk queue) is told of every line, batch and settlement so the queue can outlive
 * the process.
 */
import type { DeviceKind } from './sample';

/** One raw line as read, with the sender's wall clock, ms since the epoch. */
export interface ForwardLine {
  device: DeviceKind;
  raw: string;
  wallMs: number;
}

/** A numbered batch. */
export interface ForwardBatch {
  batchSeq: number;
  lines: ForwardLine[];
}

/** The message a batch is sent as (shared/schemas/stream.ts `lines.forwarded`). */
export interface LinesForwardedMessage {
  type: 'lines.forwarded';
  benchId: string;
  senderId: string;
  batchSeq: number;
  sentWallMs: number;
  lines: ForwardLine[];
}

/** The acknowledgement (shared/schemas/stream.ts `lines.acked`). */
export interface LinesAckedMessage {
  senderId: string;
  batchSeq: number;
  status: 'stored' | 'duplicate' | 'refused';
  reason: string | null;
}

/** Told of every change to the queue, in order, so it can be kept on disk. */
export interface ForwarderStore {
  line(l: ForwardLine): void;
  sealed(b: ForwardBatch): void;
  /** Every batch up to `batchSeq` is settled (acknowledged, or dropped to keep within bounds). */
  settled(batchSeq: number): void;
}

/** State to start from (what a store kept). */
export interface ForwarderRestore {
  batches: ForwardBatch[];
  open: ForwardLine[];
  /** Number the next batch gets. */
  nextSeq: number;
}

/** Options of {@link LineForwarder}. */
export interface LineForwarderOptions {
  benchId: string;
  /** Names this queue to the server (stable for as long as its numbers are). */
  senderId: string;
  /** Sends one message; false when the link is not open. */
  send: (m: LinesForwardedMessage) => boolean;
  /** Sender's wall clock, ms. Default Date.now. */
  now?: () => number;
  /** Lines per batch; the server takes at most 500. Default 500. */
  batchLines?: number;
  /** Most bytes of lines (as JSON) per batch, below the server's 64 KiB message limit. Default 48 000. */
  batchBytes?: number;
  /** Most batches sent and not yet acknowledged. Default 16. */
  window?: number;
  /** Most lines kept (batches and open lines); beyond it the oldest batches are dropped. Default 500 000. */
  maxLines?: number;
  restore?: ForwarderRestore;
  store?: ForwarderStore;
}

/** Counters of a forwarder. */
export interface ForwarderStats {
  read: number;
  sent: number;
  resent: number;
  stored: number;
  duplicates: number;
  refused: number;
  dropped: number;
  queuedLines: number;
  queuedBatches: number;
  inFlight: number;
  lastRefusal: string | null;
}

/** Size of a line in the message, bytes (UTF-8 of its JSON). */
function jsonBytes(l: ForwardLine): number {
  const json = JSON.stringify(l);
  // eslint-disable-next-line no-control-regex
  return /^[\x00-\x7f]*$/.test(json) ? json.length : new TextEncoder().encode(json).length;
}

export class LineForwarder {
  private readonly o: LineForwarderOptions;
  private readonly now: () => number;
  private readonly batchLines: number;
  private readonly batchBytes: number;
  private openBytes = 0;
  private readonly window: number;
  private readonly maxLines: number;
  /** Unsettled batches, oldest first. */
  private batches: ForwardBatch[];
  private open: ForwardLine[];
  private nextSeq: number;
  private queued: number;
  /** Batches (from the oldest) already sent on the current link. */
  private sentCount = 0;
  private linked = false;
  private readonly everSent = new Set<number>();
  readonly stats: ForwarderStats = { read: 0, sent: 0, resent: 0, stored: 0, duplicates: 0, refused: 0, dropped: 0, queuedLines: 0, queuedBatches: 0, inFlight: 0, lastRefusal: null };

  constructor(o: LineForwarderOptions) {
    this.o = o;
    this.now = o.now ?? Date.now;
    this.batchLines = Math.max(1, Math.min(500, o.batchLines ?? 500));
    this.batchBytes = Math.max(1024, o.batchBytes ?? 48_000);
    this.window = Math.max(1, o.window ?? 16);
    this.maxLines = Math.max(this.batchLines, o.maxLines ?? 500_000);
    this.batches = o.restore ? o.restore.batches.map((b) => ({ batchSeq: b.batchSeq, lines: [...b.lines] })) : [];
    this.open = o.restore ? [...o.restore.open] : [];
    this.nextSeq = Math.max(o.restore?.nextSeq ?? 1, (this.batches.at(-1)?.batchSeq ?? 0) + 1);
    this.queued = this.open.length + this.batches.reduce((n, b) => n + b.lines.length, 0);
    this.count();
  }

  get senderId(): string {
    return this.o.senderId;
  }

  /** A line read from an instrument. */
  push(line: ForwardLine): void {
    this.stats.read++;
    const size = jsonBytes(line);
    if (this.open.length && this.openBytes + size > this.batchBytes) this.seal();
    this.open.push(line);
    this.openBytes += size;
    this.queued++;
    this.o.store?.line(line);
    if (this.open.length >= this.batchLines) this.seal();
    this.bound();
    this.count();
  }

  /** Seals the open lines into a batch and sends what the window allows. Call on an interval. */
  tick(): void {
    if (this.open.length) this.seal();
    this.pump();
  }

  /** The link is open: everything unacknowledged is sent again, oldest first. */
  linkUp(): void {
    this.linked = true;
    this.sentCount = 0;
    this.pump();
  }

  /** The link is down: nothing counts as sent any more. */
  linkDown(): void {
    this.linked = false;
    this.sentCount = 0;
    this.count();
  }

  /** An acknowledgement from the server: that batch and every earlier one are settled. */
  acked(m: LinesAckedMessage): void {
    if (m.senderId !== this.o.senderId) return;
    if (m.status === 'stored') this.stats.stored++;
    else if (m.status === 'duplicate') this.stats.duplicates++;
    else {
      this.stats.refused++;
      this.stats.lastRefusal = m.reason;
    }
    this.settle(m.batchSeq);
    this.pump();
  }

  /** The batches not yet acknowledged (tests, status). */
  pending(): readonly ForwardBatch[] {
    return this.batches;
  }

  private seal(): void {
    this.openBytes = 0;
    while (this.open.length) {
      // Restored open lines may exceed one batch; split them by count and size alike.
      let k = 0;
      let bytes = 0;
      while (k < this.open.length && k < this.batchLines && (k === 0 || bytes + jsonBytes(this.open[k]!) <= this.batchBytes)) bytes += jsonBytes(this.open[k++]!);
      const lines = this.open.splice(0, k);
      const b: ForwardBatch = { batchSeq: this.nextSeq++, lines };
      this.batches.push(b);
      this.o.store?.sealed(b);
    }
  }

  private pump(): void {
    while (this.linked && this.sentCount < this.batches.length && this.sentCount < this.window) {
      const b = this.batches[this.sentCount]!;
      const ok = this.o.send({ type: 'lines.forwarded', benchId: this.o.benchId, senderId: this.o.senderId, batchSeq: b.batchSeq, sentWallMs: this.now(), lines: b.lines });
      if (!ok) {
        this.linkDown();
        return;
      }
      if (this.everSent.has(b.batchSeq)) this.stats.resent++;
      else this.everSent.add(b.batchSeq);
      this.stats.sent++;
      this.sentCount++;
    }
    this.count();
  }

  private settle(upTo: number): void {
    let k = 0;
    while (k < this.batches.length && this.batches[k]!.batchSeq <= upTo) {
      this.queued -= this.batches[k]!.lines.length;
      this.everSent.delete(this.batches[k]!.batchSeq);
      k++;
    }
    if (!k) return;
    this.batches.splice(0, k);
    this.sentCount = Math.max(0, this.sentCount - k);
    this.o.store?.settled(upTo);
    this.count();
  }

  /** Drops the oldest batches while over the bound. */
  private bound(): void {
    if (this.queued <= this.maxLines) return;
    if (!this.batches.length) this.seal();
    let upTo = 0;
    let k = 0;
    while (this.queued > this.maxLines && k < this.batches.length) {
      const b = this.batches[k]!;
      this.queued -= b.lines.length;
      this.stats.dropped += b.lines.length;
      upTo = b.batchSeq;
      k++;
    }
    if (!k) return;
    for (const b of this.batches.slice(0, k)) this.everSent.delete(b.batchSeq);
    this.batches.splice(0, k);
    this.sentCount = Math.max(0, this.sentCount - k);
    this.o.store?.settled(upTo);
  }

  private count(): void {
    this.stats.queuedLines = this.queued;
    this.stats.queuedBatches = this.batches.length;
    this.stats.inFlight = this.sentCount;
  }
}
