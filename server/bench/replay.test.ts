import { describe, expect, it } from 'vitest';
import { BenchHub, type SampleEntry } from './hub';
import { ReplayGapError, replayPages, type StoredSample } from './replay';

/** A hub with a small ring and a "database" holding every sample it numbered. */
function setup(ringCapacity: number, samples: number) {
  const hub = new BenchHub({ ringCapacity });
  const db: StoredSample[] = [];
  for (let i = 1; i <= samples; i++) {
    const e: SampleEntry = hub.ingestSample({ benchId: 'b', device: 'pressure', raw: `DP ${i}`, value: i, unit: 'kPa' });
    db.push({ seq: e.seq, benchId: e.benchId, device: e.device, value: e.value, unit: e.unit, raw: e.raw, wallMs: e.wallMs, runId: e.runId });
    if (i % 7 === 0) hub.publish({ type: 'run.changed', runId: 'r', status: 'running', currentIndex: i });
  }
  const reads: number[] = [];
  let storedUpTo = hub.latestSeq;
  const src = {
    ring: hub.ring,
    stored: async (after: number, limit: number) => {
      reads.push(limit);
      return db.filter((r) => Number(r.seq) > after).slice(0, limit);
    },
    storedUpTo: () => storedUpTo,
  };
  return { hub, src, reads, setStoredUpTo: (n: number) => (storedUpTo = n) };
}

async function all(gen: AsyncGenerator<{ seq: number; type: string }[]>) {
  const pages: number[][] = [];
  for await (const p of gen) pages.push(p.map((m) => m.seq));
  return pages;
}

describe('replayPages', () => {
  it('serves from the ring in pages of at most pageSize, oldest first, up to upTo', async () => {
    const { hub, src, reads } = setup(1000, 100);
    const latest = hub.latestSeq;
    const pages = await all(replayPages(src, 10, latest - 5, 25));
    expect(pages.every((p) => p.length <= 25)).toBe(true);
    expect(pages.flat()).toEqual(Array.from({ length: latest - 15 }, (_, i) => 11 + i));
    expect(reads).toEqual([]);
  });

  it('reads what the ring evicted from storage, page by page, then goes on from the ring', async () => {
    const { hub, src, reads } = setup(30, 100);
    const oldest = hub.ring.oldestSeq!;
    const pages = await all(replayPages(src, 0, hub.latestSeq, 20));
    const seqs = pages.flat();
    expect(pages.every((p) => p.length <= 20)).toBe(true);
    expect(reads.length).toBeGreaterThan(1);
    // Stored samples below the ring (events there are not stored), then everything in the ring.
    expect(seqs.filter((s) => s < oldest)).toEqual(Array.from({ length: oldest - 1 }, (_, i) => i + 1).filter((s) => Number.isInteger(s) && s % 8 !== 0));
    expect(seqs.filter((s) => s >= oldest)).toEqual(Array.from({ length: hub.latestSeq - oldest + 1 }, (_, i) => oldest + i));
    expect([...seqs].sort((a, b) => a - b)).toEqual(seqs);
  });

  it('refuses to skip samples the ring evicted but storage does not hold yet', async () => {
    const { hub, src, setStoredUpTo } = setup(30, 100);
    setStoredUpTo(hub.ring.oldestSeq! - 10);
    await expect(all(replayPages(src, 0, hub.latestSeq, 20))).rejects.toBeInstanceOf(ReplayGapError);
  });
});
