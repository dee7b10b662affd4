/**
 * Durable reservation of sequence numbers. The hub numbers every sample and event as it arrives,
 * and the stream shows them at once, but a sample reaches the journal only with its batch (up to
 * the writer's flush interval later) and an event never does. Continuing after a crash from the
 * highest seq found in the journal and the database would hand out again numbers that viewers had
 * already seen naming other samples. So numbers are reserved in blocks: the end of the block is
 * written to a small file in the journal directory and synced before any number in it is used,
 * and a new process starts after the last block any earlier process reserved.
 *
 * The file holds two fixed-size slots written in turn, each `seq <ceiling> <crc32>`; at start-up the
 * highest slot whose checksum holds wins. A write torn by a crash spoils only the slot being
 * written, and the other still holds the previous ceiling, above every number used before it (no
 * number of a new block is used until its write is synced).
 */
import fs from 'node:fs';
import path from 'node:path';
import zlib from 'node:zlib';

/** Bytes per slot (one disk sector holds both). */
const SLOT_BYTES = 64;
const SLOT = /^seq (\d{1,16}) ([0-9a-f]{8})\n/;

const crcOf = (ceiling: number) => zlib.crc32(`seq ${ceiling}`).toString(16).padStart(8, '0');

function encodeSlot(ceiling: number): Buffer {
  const b = Buffer.alloc(SLOT_BYTES, 0x20);
  b.write(`seq ${ceiling} ${crcOf(ceiling)}\n`, 0, 'latin1');
  return b;
}

function decodeSlot(b: Buffer): number | undefined {
  const m = SLOT.exec(b.toString('latin1'));
  if (!m) return undefined;
  const ceiling = Number(m[1]);
  return Number.isSafeInteger(ceiling) && m[2] === crcOf(ceiling) ? ceiling : undefined;
}

/** Options of {@link SeqReservation}. */
export interface SeqReservationOptions {
  /** Numbers reserved per synced write. Default 50 000 (one write every 50 000 samples and events). */
  blockSize?: number;
  /** File name in the directory. Default `seq.reserved`. */
  name?: string;
}

/** The reservation file of one journal directory; synchronous, so the hub can call it on its ingest path. */
export class SeqReservation {
  readonly file: string;
  private readonly blockSize: number;
  private fd: number | undefined;
  private ceiling = 0;
  private nextSlot = 0;
  /** Highest number reserved by any earlier process (0 when none). */
  readonly previous: number;
  /** The file held bytes but no intact slot: earlier reservations are unknown (worth a warning). */
  readonly damaged: boolean;
  /** Synced writes made (counter for tests and status). */
  writes = 0;

  constructor(dir: string, options: SeqReservationOptions = {}) {
    this.file = path.join(dir, options.name ?? 'seq.reserved');
    this.blockSize = Math.max(1, Math.floor(options.blockSize ?? 50_000));
    fs.mkdirSync(dir, { recursive: true });
    let created = false;
    try {
      this.fd = fs.openSync(this.file, 'r+');
    } catch (e) {
      if ((e as NodeJS.ErrnoException).code !== 'ENOENT') throw e;
      this.fd = fs.openSync(this.file, 'w+');
      created = true;
    }
    const buf = Buffer.alloc(SLOT_BYTES * 2);
    const n = fs.readSync(this.fd, buf, 0, buf.length, 0);
    const slots = [decodeSlot(buf.subarray(0, Math.min(n, SLOT_BYTES))), n > SLOT_BYTES ? decodeSlot(buf.subarray(SLOT_BYTES, n)) : undefined];
    this.previous = Math.max(slots[0] ?? 0, slots[1] ?? 0);
    this.damaged = n > 0 && slots[0] === undefined && slots[1] === undefined;
    // Next write goes to the slot that does not hold the newest ceiling.
    this.nextSlot = slots[0] !== undefined && slots[0] === this.previous ? 1 : 0;
    if (created) {
      // The new file's directory entry must survive a crash too.
      const dirFd = fs.openSync(dir, 'r');
      try {
        fs.fsyncSync(dirFd);
      } finally {
        fs.closeSync(dirFd);
      }
    }
  }

  /** Highest number reserved now. */
  get reservedTo(): number {
    return this.ceiling;
  }

  /**
   * The first number this process may use, given the next one free by the journal and the
   * database: after both it and every earlier reservation. Reserves its first block.
   */
  start(nextFree: number): number {
    const first = Math.max(nextFree, this.previous + 1);
    this.reserve(first + this.blockSize - 1);
    return first;
  }

  /** Called before `seq` is handed out: reserves (and syncs) the next block when `seq` is past the current one. */
  readonly ensure = (seq: number): void => {
    if (seq > this.ceiling) this.reserve(seq + this.blockSize - 1);
  };

  private reserve(ceiling: number): void {
    // Closed at shutdown, after the stream and the writer: nothing numbered now is shown or stored.
    if (this.fd === undefined) return;
    fs.writeSync(this.fd, encodeSlot(ceiling), 0, SLOT_BYTES, this.nextSlot * SLOT_BYTES);
    fs.fdatasyncSync(this.fd);
    this.nextSlot = 1 - this.nextSlot;
    this.ceiling = ceiling;
    this.writes++;
  }

  close(): void {
    if (this.fd !== undefined) fs.closeSync(this.fd);
    this.fd = undefined;
  }
}
