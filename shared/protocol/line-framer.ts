/**
 * Line framing for instrument protocols: bytes in, complete text lines out.
 *
 * Pure and synchronous, no Node APIs, so the same code frames bytes from `serialport` on the
 * server and from Web Serial in the browser.
 */

/** Line terminator a device ends its lines with. */
export type LineTerminator = '\n' | '\r\n' | '\r';

/** Why the framer discarded bytes instead of emitting a line. */
export type FramerDropReason =
  /** The line grew past `maxLineLength` before its terminator arrived. */
  | 'overlong'
  /** The line held a byte outside printable ASCII (line noise, wrong baud rate, power-up junk). */
  | 'binary'
  /** Bytes before the first terminator, discarded when `syncOnFirstTerminator` is set. */
  | 'partial';

/** Options of {@link LineFramer}. */
export interface LineFramerOptions {
  /**
   * Terminator the device sends. Default `'\n'`.
   * `'\n'` and `'\r\n'` both split on LF and strip one trailing CR, because devices configured
   * for one often send the other; `'\r'` splits on CR and strips one leading LF for the same reason.
   */
  terminator?: LineTerminator;
  /** Longest accepted line in bytes, terminator excluded. Default 256 bytes. */
  maxLineLength?: number;
  /**
   * Discard everything before the first terminator (and again after {@link LineFramer.reset}).
   * Use it for free-running devices: the port may open in the middle of a line, and a line's
   * tail such as `5.123 kPa` would otherwise decode as a valid, wrong value. Default false.
   */
  syncOnFirstTerminator?: boolean;
}

/** Running counters of a {@link LineFramer}. */
export interface FramerStats {
  /** Bytes fed in. */
  bytes: number;
  /** Complete lines emitted. */
  lines: number;
  /** Lines (or fragments) discarded, by reason. */
  dropped: Record<FramerDropReason, number>;
}

/** Line the framer discarded, reported to `onDrop`. */
export interface DroppedLine {
  reason: FramerDropReason;
  /** The discarded text with non-printable bytes escaped as `\xNN`, cut to 80 characters. */
  raw: string;
}

const LF = 0x0a;
const CR = 0x0d;
const TAB = 0x09;
const RAW_PREVIEW = 80;

const encoder = new TextEncoder();

function isPrintable(byte: number): boolean {
  return (byte >= 0x20 && byte <= 0x7e) || byte === TAB;
}

/** Escapes non-printable bytes so a dropped line can be shown and stored as text. */
export function escapeBytes(bytes: Uint8Array, limit = RAW_PREVIEW): string {
  let out = '';
  for (let i = 0; i < bytes.length && out.length < limit; i += 1) {
    const b = bytes[i]!;
    out += isPrintable(b) ? String.fromCharCode(b) : `\\x${b.toString(16).padStart(2, '0')}`;
  }
  return out.slice(0, limit);
}

/**
 * Splits a byte stream into lines. Feed chunks with {@link LineFramer.push}; it returns the lines
 * completed by that chunk. Never throws on any input: bad lines are dropped, counted in
 * {@link LineFramer.stats} and passed to the optional `onDrop` callback, and framing resumes at
 * the next terminator.
 */
export class LineFramer {
  readonly terminator: LineTerminator;
  readonly maxLineLength: number;
  private readonly syncOnFirst: boolean;
  private readonly onDrop: ((line: DroppedLine) => void) | undefined;
  private readonly splitByte: number;
  /** Bytes buffered at most: the limit plus room for the CR that '\n' mode strips. */
  private readonly capacity: number;
  private buffer: Uint8Array;
  private length = 0;
  /** Discarding bytes until the next terminator (after an overlong line or before sync). */
  private discarding: FramerDropReason | null;
  private discardPreview: number[] = [];
  /** In CR mode, a LF right after the terminator is ignored. */
  private skipLeadingLf = false;

  readonly stats: FramerStats = { bytes: 0, lines: 0, dropped: { overlong: 0, binary: 0, partial: 0 } };

  constructor(options: LineFramerOptions = {}, onDrop?: (line: DroppedLine) => void) {
    this.terminator = options.terminator ?? '\n';
    this.maxLineLength = Math.max(1, Math.floor(options.maxLineLength ?? 256));
    this.syncOnFirst = options.syncOnFirstTerminator ?? false;
    this.onDrop = onDrop;
    this.splitByte = this.terminator === '\r' ? CR : LF;
    this.capacity = this.maxLineLength + (this.splitByte === LF ? 1 : 0);
    this.buffer = new Uint8Array(Math.min(this.capacity, 1024));
    this.discarding = this.syncOnFirst ? 'partial' : null;
  }

  /** Forgets any partial line, e.g. after a reconnect; counters are kept. */
  reset(): void {
    this.length = 0;
    this.discardPreview = [];
    this.discarding = this.syncOnFirst ? 'partial' : null;
    this.skipLeadingLf = false;
  }

  /** Bytes held while waiting for a terminator. */
  get pending(): number {
    return this.length;
  }

  /**
   * Feeds a chunk and returns the lines it completed, terminators removed, in arrival order.
   * A string chunk is encoded as UTF-8 (so any non-ASCII character makes its line `binary`).
   * Empty lines are skipped silently.
   */
  push(chunk: Uint8Array | string): string[] {
    const bytes = typeof chunk === 'string' ? encoder.encode(chunk) : chunk;
    const lines: string[] = [];
    this.stats.bytes += bytes.length;
    for (let i = 0; i < bytes.length; i += 1) {
      const b = bytes[i]!;
      if (this.skipLeadingLf) {
        this.skipLeadingLf = false;
        if (b === LF) continue;
      }
      if (b === this.splitByte) {
        this.endLine(lines);
        if (this.splitByte === CR) this.skipLeadingLf = true;
        continue;
      }
      if (this.discarding) {
        if (this.discardPreview.length < RAW_PREVIEW) this.discardPreview.push(b);
        continue;
      }
      if (this.length >= this.capacity) {
        // Keep a preview of the overlong line for the drop report, then skip to the terminator.
        this.discarding = 'overlong';
        this.discardPreview = Array.from(this.buffer.subarray(0, Math.min(this.length, RAW_PREVIEW)));
        this.length = 0;
        continue;
      }
      if (this.length === this.buffer.length) {
        const grown = new Uint8Array(Math.min(this.buffer.length * 2, this.capacity));
        grown.set(this.buffer);
        this.buffer = grown;
      }
      this.buffer[this.length] = b;
      this.length += 1;
    }
    return lines;
  }

  private endLine(lines: string[]): void {
    if (this.discarding) {
      const reason = this.discarding;
      this.discarding = null;
      const preview = Uint8Array.from(this.discardPreview);
      this.discardPreview = [];
      // A sync point with nothing before it is not a drop.
      if (reason === 'partial' && preview.length === 0) return;
      this.drop(reason, preview);
      return;
    }
    let end = this.length;
    this.length = 0;
    // '\n' and '\r\n' modes: strip one trailing CR.
    if (this.splitByte === LF && end > 0 && this.buffer[end - 1] === CR) end -= 1;
    if (end === 0) return;
    if (end > this.maxLineLength) {
      this.drop('overlong', this.buffer.subarray(0, end));
      return;
    }
    const line = this.buffer.subarray(0, end);
    for (let i = 0; i < end; i += 1) {
      if (!isPrintable(line[i]!)) {
        this.drop('binary', line);
        return;
      }
    }
    let text = '';
    for (let i = 0; i < end; i += 1) text += String.fromCharCode(line[i]!);
    this.stats.lines += 1;
    lines.push(text);
  }

  private drop(reason: FramerDropReason, bytes: Uint8Array): void {
    this.stats.dropped[reason] += 1;
    if (this.onDrop) this.onDrop({ reason, raw: escapeBytes(bytes) });
  }
}
