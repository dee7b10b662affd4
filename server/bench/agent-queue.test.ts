import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterEach, describe, expect, it } from 'vitest';
import { LineForwarder } from '../../shared/protocol';
import { AgentQueue } from './agent-queue';

const dirs: string[] = [];
const tmp = () => {
  const d = fs.mkdtempSync(path.join(os.tmpdir(), 'agent-queue-'));
  dirs.push(d);
  return d;
};
afterEach(() => {
  for (const d of dirs.splice(0)) fs.rmSync(d, { recursive: true, force: true });
});
const line = (i: number) => ({ device: 'pressure' as const, raw: `DP ${i} kPa`, wallMs: i });

function forwarder(q: AgentQueue, sent: number[]) {
  return new LineForwarder({ benchId: 'b', senderId: q.senderId, restore: q.restore, store: q, batchLines: 3, send: (m) => (sent.push(m.batchSeq), true) });
}

describe('AgentQueue', () => {
  it('survives a crash: sealed batches, open lines and the sender id come back; settled batches do not', () => {
    const dir = tmp();
    const q1 = AgentQueue.open({ dir });
    const sent: number[] = [];
    const f1 = forwarder(q1, sent);
    for (let i = 0; i < 7; i++) f1.push(line(i)); // batches 1 (0-2), 2 (3-5), line 6 open
    f1.linkUp();
    f1.acked({ senderId: q1.senderId, batchSeq: 1, status: 'stored', reason: null });
    q1.abandon(); // killed: no sync, no seal
    // A torn record at the end, as a kill in the middle of a write leaves.
    const seg = fs.readdirSync(dir).find((f) => f.startsWith('queue-'))!;
    fs.appendFileSync(path.join(dir, seg), 'L{"d":"press');

    const q2 = AgentQueue.open({ dir });
    expect(q2.senderId).toBe(q1.senderId);
    expect(q2.restore.batches.map((b) => [b.batchSeq, b.lines.map((l) => l.raw)])).toEqual([[2, ['DP 3 kPa', 'DP 4 kPa', 'DP 5 kPa']]]);
    expect(q2.restore.open.map((l) => l.raw)).toEqual(['DP 6 kPa']);
    expect(q2.restore.nextSeq).toBe(3);
    const again: number[] = [];
    const f2 = forwarder(q2, again);
    f2.tick();
    f2.linkUp();
    expect(again).toEqual([2, 3]);
    q2.close();
  });

  it('deletes segments once all their batches are settled, keeping the disk bounded', () => {
    const dir = tmp();
    const q = AgentQueue.open({ dir, segmentBytes: 200 });
    const f = forwarder(q, []);
    f.linkUp();
    for (let i = 0; i < 60; i++) f.push(line(i));
    const segs = () => fs.readdirSync(dir).filter((x) => x.startsWith('queue-')).length;
    expect(segs()).toBeGreaterThan(3);
    f.acked({ senderId: q.senderId, batchSeq: 20, status: 'stored', reason: null });
    expect(segs()).toBe(1);
    q.close();
    const q2 = AgentQueue.open({ dir });
    expect(q2.restore.batches).toEqual([]);
    expect(q2.restore.nextSeq).toBe(21);
    q2.close();
  });
});
