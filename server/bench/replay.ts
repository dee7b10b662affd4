/**
 * Stream resume: what the hub numbered after a given seq, read in pages so that no resume ever
 * holds the process for long or builds one large array: from the ring buffer while it still holds
 * the entries, and from the stored samples (a keyset page at a time) for what it has evicted.
 * Device and run events are not stored, so a resume older than the ring gets the samples only.
 */
import type { StreamMessage } from '../../shared/schemas/stream';
import { toStreamMessage, type HubEntry } from './hub';
import type { RingBuffer } from './ring-buffer';

/** A stored sample row as the sample repository returns it. */
export interface StoredSample {
  seq: number | bigint | string;
  benchId: string;
  device: string;
  value: number | null;
  unit: string | null;
  raw: string;
  wallMs: number;
  runId: string | null;
}

/** Where a resume reads from. */
export interface ReplaySource {
  ring: RingBuffer<HubEntry>;
  /** Stored samples with seq > `after`, oldest first, at most `limit`. */
  stored(after: number, limit: number): Promise<StoredSample[]>;
  /** Highest seq below which every sample is stored. */
  storedUpTo(): number;
}

/** The entries after `since` can no longer be served without a gap. */
export class ReplayGapError extends Error {
  constructor(readonly since: number) {
    super(`the samples after seq ${since} are neither in the ring nor stored yet`);
  }
}

function fromStored(r: StoredSample): StreamMessage {
  return {
    type: 'sample.received',
    seq: Number(r.seq),
    benchId: r.benchId,
    device: r.device as 'pressure' | 'current',
    value: r.value,
    unit: r.unit,
    raw: r.raw,
    wallMs: r.wallMs,
    runId: r.runId,
  };
}

/**
 * Pages of at most `pageSize` stream messages numbered in (`since`, `upTo`], oldest first. Each
 * page is read when the previous one has been taken, so the caller sets the pace (back-pressure).
 * Throws {@link ReplayGapError} when the ring has evicted entries the database does not hold yet.
 */
export async function* replayPages(src: ReplaySource, since: number, upTo: number, pageSize: number): AsyncGenerator<StreamMessage[]> {
  let cursor = since;
  while (cursor < upTo) {
    const fromRing = src.ring.page(cursor, pageSize, upTo);
    if (fromRing) {
      if (!fromRing.length) return;
      cursor = fromRing[fromRing.length - 1]!.seq;
      yield fromRing.map(toStreamMessage);
      continue;
    }
    // The ring has moved past `cursor`: stored samples below its oldest entry, one keyset page.
    const oldest = src.ring.oldestSeq ?? upTo + 1;
    if (src.storedUpTo() < Math.min(oldest - 1, upTo)) throw new ReplayGapError(cursor);
    const rows = await src.stored(cursor, pageSize);
    const page: StreamMessage[] = [];
    for (const r of rows) {
      const seq = Number(r.seq);
      if (seq >= oldest || seq > upTo) break;
      page.push(fromStored(r));
    }
    // A short page means nothing else is stored below the ring: go on from the ring's start.
    cursor = page.length === rows.length && rows.length === pageSize ? page[page.length - 1]!.seq : Math.min(oldest - 1, upTo);
    if (page.length) yield page;
  }
}
