import { describe, expect, it } from 'vitest';
import { LineForwarder, type ForwardBatch, type LinesForwardedMessage } from './line-forwarder';

function rig(o: { window?: number; maxLines?: number; batchLines?: number } = {}) {
  const sent: LinesForwardedMessage[] = [];
  let open = false;
  const store = { lines: 0, sealed: [] as number[], settled: 0 };
  const f = new LineForwarder({
    benchId: 'agent-1',
    senderId: 's1',
    now: () => 1000,
    ...o,
    send: (m) => {
      if (!open) return false;
      sent.push(m);
      return true;
    },
    store: { line: () => store.lines++, sealed: (b: ForwardBatch) => store.sealed.push(b.batchSeq), settled: (n) => (store.settled = n) },
  });
  return { f, sent, store, setOpen: (v: boolean) => (open = v) };
}
const line = (i: number) => ({ device: 'current' as const, raw: `L${i}`, wallMs: i });
const ack = (batchSeq: number, status: 'stored' | 'duplicate' | 'refused' = 'stored') => ({ senderId: 's1', batchSeq, status, reason: status === 'refused' ? 'no' : null });

describe('LineForwarder', () => {
  it('numbers batches from 1, keeps them until acknowledged and resends every unacknowledged one after a reconnect', () => {
    const { f, sent, store, setOpen } = rig();
    f.push(line(1));
    f.push(line(2));
    f.tick(); // link down: sealed, not sent
    expect(sent).toEqual([]);
    setOpen(true);
    f.linkUp();
    expect(sent.map((m) => [m.batchSeq, m.lines.map((l) => l.raw)])).toEqual([[1, ['L1', 'L2']]]);
    f.push(line(3));
    f.tick();
    expect(sent.map((m) => m.batchSeq)).toEqual([1, 2]);
    // The link drops before any acknowledgement: both go again, with their own numbers.
    f.linkDown();
    f.linkUp();
    expect(sent.map((m) => m.batchSeq)).toEqual([1, 2, 1, 2]);
    expect(f.stats.resent).toBe(2);
    f.acked(ack(1));
    expect(f.pending().map((b) => b.batchSeq)).toEqual([2]);
    expect(store.settled).toBe(1);
    f.acked(ack(2, 'duplicate'));
    expect(f.pending()).toEqual([]);
    expect(f.stats.queuedLines).toBe(0);
    expect(store.lines).toBe(3);
    expect(store.sealed).toEqual([1, 2]);
  });

  it('keeps at most `window` batches unacknowledged on the link', () => {
    const { f, sent, setOpen } = rig({ window: 2, batchLines: 1 });
    setOpen(true);
    f.linkUp();
    for (let i = 0; i < 5; i++) f.push(line(i));
    f.tick();
    expect(sent.map((m) => m.batchSeq)).toEqual([1, 2]);
    f.acked(ack(1));
    expect(sent.map((m) => m.batchSeq)).toEqual([1, 2, 3]);
    f.acked(ack(3)); // cumulative
    expect(sent.map((m) => m.batchSeq)).toEqual([1, 2, 3, 4, 5]);
  });

  it('drops a refused batch (with the reason) and ignores acknowledgements for another sender', () => {
    const { f, setOpen } = rig();
    setOpen(true);
    f.linkUp();
    f.push(line(1));
    f.tick();
    f.acked({ ...ack(1), senderId: 'other' });
    expect(f.pending().length).toBe(1);
    f.acked(ack(1, 'refused'));
    expect(f.pending().length).toBe(0);
    expect(f.stats.lastRefusal).toBe('no');
  });

  it('is bounded: beyond maxLines the oldest batches are dropped and counted', () => {
    const { f, store } = rig({ maxLines: 10, batchLines: 2 });
    for (let i = 0; i < 15; i++) f.push(line(i));
    expect(f.stats.queuedLines).toBeLessThanOrEqual(10);
    expect(f.stats.dropped + f.stats.queuedLines).toBe(15);
    expect(store.settled).toBeGreaterThan(0);
  });

  it('splits batches by size so a message stays under the server limit', () => {
    const { f, sent, setOpen } = rig();
    setOpen(true);
    f.linkUp();
    for (let i = 0; i < 300; i++) f.push({ device: 'pressure', raw: 'x'.repeat(500), wallMs: i });
    f.tick();
    expect(sent.length).toBeGreaterThan(1);
    for (const m of sent) expect(JSON.stringify(m).length).toBeLessThan(64 * 1024);
    expect(sent.reduce((n, m) => n + m.lines.length, 0)).toBe(300);
  });

  it('starts from a restored queue: its batches first, then new numbers after them', () => {
    const sent: LinesForwardedMessage[] = [];
    const f = new LineForwarder({
      benchId: 'b',
      senderId: 's1',
      send: (m) => (sent.push(m), true),
      restore: { batches: [{ batchSeq: 7, lines: [line(1)] }], open: [line(2)], nextSeq: 8 },
    });
    f.tick();
    f.linkUp();
    expect(sent.map((m) => [m.batchSeq, m.lines.length])).toEqual([
      [7, 1],
      [8, 1],
    ]);
  });
});
