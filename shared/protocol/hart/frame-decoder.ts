/**
 * Streaming HART frame decoder: bytes in any chunking in, frames out. Resynchronises on preambles
 * and delimiters, drops and counts garbage, reports frames whose checksum fails, and never throws.
 *
 * A frame start is a delimiter byte after at least two preambles (the sync rule is from memory of
 * HCF_SPEC-081). A start found in noise may claim a byte count that swallows a real frame behind
 * it; so a candidate that is incomplete or fails its checksum yields to any complete, valid frame
 * that starts inside it, and scanning resumes one byte after a failed delimiter, never after its
 * claimed end.
 */
import { decodeAddress, HART_PREAMBLE, HART_PREAMBLES, HART_SYNC_PREAMBLES, hartChecksum, parseDelimiter, type HartFrame, type HartFrameKind } from './frame';

/** Longest frame on the wire: 20 preambles, delimiter, 5 address, 3 expansion, command, count, 255 bytes, checksum. */
export const HART_MAX_FRAME = 20 + 1 + 5 + 3 + 1 + 1 + 255 + 1;

/** What the decoder reports. */
export type HartDecoderEvent =
  /** A frame whose checksum holds. `raw` runs from the first preamble seen to the checksum. */
  | { type: 'frame'; frame: HartFrame; raw: Uint8Array; preambles: number }
  /** A complete frame whose checksum failed; its header as read, so a master can tell whether it was the awaited reply. */
  | { type: 'bad-checksum'; raw: Uint8Array; kind: HartFrameKind; command: number; address: HartFrame['address'] }
  /** Bytes that were not part of any frame, dropped. */
  | { type: 'garbage'; bytes: Uint8Array };

/** Counters of a {@link HartFrameDecoder}. */
export interface HartDecoderStats {
  frames: number;
  badChecksums: number;
  garbageBytes: number;
}

interface Candidate {
  /** Index of the delimiter. */
  at: number;
  kind: HartFrameKind;
  headerEnd: number;
  /** Index one past the checksum, or undefined until the byte count has arrived. */
  end: number | undefined;
}

/** Decodes a HART byte stream. Holds at most one frame's worth of unfinished bytes plus the chunk being read. */
export class HartFrameDecoder {
  readonly stats: HartDecoderStats = { frames: 0, badChecksums: 0, garbageBytes: 0 };
  private buf = new Uint8Array(0);

  /** Adds bytes and returns what they completed, in stream order. Never throws. */
  push(chunk: Uint8Array): HartDecoderEvent[] {
    const joined = new Uint8Array(this.buf.length + chunk.length);
    joined.set(this.buf);
    joined.set(chunk, this.buf.length);
    this.buf = joined;
    return this.scan();
  }

  /** Forgets unfinished bytes (e.g. after a reconnect); they are not reported. */
  reset(): void {
    this.buf = new Uint8Array(0);
  }

  private candidateAt(at: number): Candidate | undefined {
    const b = this.buf;
    if (at < HART_SYNC_PREAMBLES) return undefined;
    for (let k = 1; k <= HART_SYNC_PREAMBLES; k += 1) if (b[at - k] !== HART_PREAMBLE) return undefined;
    const delimiter = parseDelimiter(b[at] ?? 0);
    if (!delimiter) return undefined;
    const headerEnd = at + 1 + (delimiter.long ? 5 : 1) + delimiter.expansionBytes + 2;
    if (b.length < headerEnd) return { at, kind: delimiter.kind, headerEnd, end: undefined };
    const count = b[headerEnd - 1] ?? 0;
    // A response or burst counts its two status bytes: fewer than two is no frame at all.
    if (delimiter.kind !== 'request' && count < 2) return undefined;
    return { at, kind: delimiter.kind, headerEnd, end: headerEnd + count + 1 };
  }

  private complete(c: Candidate): c is Candidate & { end: number } {
    return c.end !== undefined && c.end <= this.buf.length;
  }

  private valid(c: Candidate & { end: number }): boolean {
    return hartChecksum(this.buf, c.at, c.end - 1) === this.buf[c.end - 1];
  }

  /** First complete frame with a good checksum starting in (from, to], to the end of the buffer. */
  private innerFrame(from: number, to: number): (Candidate & { end: number }) | undefined {
    for (let q = from + 1; q <= Math.min(to, this.buf.length - 1); q += 1) {
      const c = this.candidateAt(q);
      if (c && this.complete(c) && this.valid(c)) return c;
    }
    return undefined;
  }

  private preamblesBefore(at: number, floor: number): number {
    let n = 0;
    while (at - n - 1 >= floor && this.buf[at - n - 1] === HART_PREAMBLE) n += 1;
    return n;
  }

  private scan(): HartDecoderEvent[] {
    const events: HartDecoderEvent[] = [];
    let start = 0; // bytes before `start` are already reported or dropped
    let cursor = 0; // next position to look for a delimiter
    const drop = (to: number): void => {
      if (to <= start) return;
      events.push({ type: 'garbage', bytes: this.buf.slice(start, to) });
      this.stats.garbageBytes += to - start;
      start = to;
    };
    const take = (c: Candidate & { end: number }): void => {
      const preambles = this.preamblesBefore(c.at, start);
      drop(c.at - preambles);
      events.push({ type: 'frame', frame: this.frameOf(c), raw: this.buf.slice(c.at - preambles, c.end), preambles });
      this.stats.frames += 1;
      start = c.end;
      cursor = c.end;
    };
    for (;;) {
      let c: Candidate | undefined;
      while (cursor < this.buf.length && !(c = this.candidateAt(cursor))) cursor += 1;
      if (!c) break;
      if (!this.complete(c)) {
        const inner = this.innerFrame(c.at, c.end ?? this.buf.length);
        if (inner) {
          take(inner);
          continue;
        }
        break; // wait for more bytes
      }
      if (this.valid(c)) {
        take(c);
        continue;
      }
      const inner = this.innerFrame(c.at, c.end - 1);
      if (inner) {
        take(inner);
        continue;
      }
      const header = this.frameOf(c);
      events.push({ type: 'bad-checksum', raw: this.buf.slice(c.at, c.end), kind: c.kind, command: header.command, address: header.address });
      this.stats.badChecksums += 1;
      cursor = c.at + 1;
    }
    // Keep what may still become a frame: from an incomplete candidate, else the trailing preamble run.
    drop(cursor >= this.buf.length ? this.buf.length - Math.min(HART_PREAMBLES.max, this.preamblesBefore(this.buf.length, start)) : cursor - this.preamblesBefore(cursor, start));
    this.buf = this.buf.slice(start);
    return events;
  }

  private frameOf(c: Candidate): HartFrame {
    const b = this.buf;
    const delimiter = parseDelimiter(b[c.at] ?? 0);
    const addressLength = delimiter?.long ? 5 : 1;
    const address = decodeAddress(b.slice(c.at + 1, c.at + 1 + addressLength));
    const expansionLength = delimiter?.expansionBytes ?? 0;
    const expansion = b.slice(c.at + 1 + addressLength, c.at + 1 + addressLength + expansionLength);
    const command = b[c.headerEnd - 2] ?? 0;
    const dataStart = c.headerEnd + (c.kind === 'request' ? 0 : 2);
    const dataEnd = (c.end ?? b.length) - 1;
    const frame: HartFrame = { kind: c.kind, address, command, data: b.slice(dataStart, Math.max(dataStart, dataEnd)) };
    if (c.kind !== 'request') frame.status = { responseCode: b[c.headerEnd] ?? 0, deviceStatus: b[c.headerEnd + 1] ?? 0 };
    if (expansionLength > 0) frame.expansion = expansion;
    return frame;
  }
}
