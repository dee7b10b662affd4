import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterEach, describe, expect, it } from 'vitest';
import { BenchHub } from './hub';
import { SeqReservation } from './seq-reservation';

const dirs: string[] = [];
const tmp = () => {
  const d = fs.mkdtempSync(path.join(os.tmpdir(), 'sp-seq-'));
  dirs.push(d);
  return d;
};
afterEach(() => {
  for (const d of dirs.splice(0)) fs.rmSync(d, { recursive: true, force: true });
});

describe('SeqReservation', () => {
  it('starts a fresh directory at the next free number and reserves one block', () => {
    const r = new SeqReservation(tmp(), { blockSize: 100 });
    expect(r.previous).toBe(0);
    expect(r.start(42)).toBe(42);
    expect(r.reservedTo).toBe(141);
    r.close();
  });

  it('a new process starts after every number an earlier one reserved, even one it never stored', () => {
    const dir = tmp();
    const a = new SeqReservation(dir, { blockSize: 100 });
    const hubA = new BenchHub({ firstSeq: 1 });
    hubA.setNextSeq(a.start(1));
    hubA.guardSeqs(a.ensure);
    // 250 numbers handed out (streamed), none of them stored, then the process dies without a word.
    for (let i = 0; i < 250; i++) hubA.ingestSample({ benchId: 'b', device: 'pressure', raw: `DP ${i}`, value: i, unit: 'kPa' });
    expect(hubA.latestSeq).toBe(250);
    expect(a.reservedTo).toBeGreaterThanOrEqual(250);
    // (no close: a SIGKILL closes nothing)
    const b = new SeqReservation(dir, { blockSize: 100 });
    // The journal and the database knew only up to seq 10.
    const first = b.start(11);
    expect(first).toBeGreaterThan(250);
    expect(first).toBe(a.reservedTo + 1);
    b.close();
    a.close();
  });

  it('reserves the next block, synced, before a number past the current one is used', () => {
    const dir = tmp();
    const r = new SeqReservation(dir, { blockSize: 10 });
    const hub = new BenchHub();
    hub.setNextSeq(r.start(1));
    hub.guardSeqs(r.ensure);
    for (let i = 0; i < 10; i++) hub.publish({ type: 'run.changed', runId: 'r', status: 'running', currentIndex: 0 });
    expect(r.writes).toBe(1);
    hub.publish({ type: 'run.changed', runId: 'r', status: 'running', currentIndex: 1 });
    expect(r.writes).toBe(2);
    expect(r.reservedTo).toBe(20);
    expect(new SeqReservation(dir).previous).toBe(20);
    r.close();
  });

  it('a torn write spoils one slot only: the other still holds the previous ceiling', () => {
    const dir = tmp();
    const r = new SeqReservation(dir, { blockSize: 10 });
    r.start(1); // slot 0: 10
    r.ensure(11); // slot 1: 20
    r.ensure(21); // slot 0: 30
    r.close();
    const file = path.join(dir, 'seq.reserved');
    const bytes = fs.readFileSync(file);
    expect(new SeqReservation(dir).previous).toBe(30);
    // The write of slot 0 (30) torn half-way: its checksum no longer holds.
    bytes.write('seq 3', 0, 'latin1');
    bytes.write('\u0000\u0000\u0000', 5, 'latin1');
    fs.writeFileSync(file, bytes);
    expect(new SeqReservation(dir).previous).toBe(20);
    // Garbage everywhere: nothing reserved is known.
    fs.writeFileSync(file, 'not a reservation');
    expect(new SeqReservation(dir).previous).toBe(0);
  });
});
