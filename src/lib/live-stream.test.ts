import { QueryClient } from '@tanstack/react-query';
import { afterEach, describe, expect, it } from 'vitest';
import type { Run } from '../../shared/schemas/runs';
import { LiveSampleStore } from '../stores/live-samples';
import { useLiveRun } from '../stores/live-run';
import { STREAM_CLOSE } from '../../shared/schemas/stream';
import { applyStreamMessage } from './apply-stream-message';
import { LiveStream, type SocketLike } from './live-stream';
import { queryKeys } from './query-keys';

class FakeSocket implements SocketLike {
  readyState = 0;
  onopen: ((ev: unknown) => void) | null = null;
  onmessage: ((ev: { data: unknown }) => void) | null = null;
  onclose: ((ev: unknown) => void) | null = null;
  onerror: ((ev: unknown) => void) | null = null;
  sent: string[] = [];
  closed = false;
  constructor(readonly url: string) {}
  send(data: string) {
    this.sent.push(data);
  }
  close() {
    this.closed = true;
    this.readyState = 3;
  }
  open() {
    this.readyState = 1;
    this.onopen?.({});
  }
  emit(m: unknown) {
    this.onmessage?.({ data: JSON.stringify(m) });
  }
  drop(code = 1006, reason = '') {
    this.readyState = 3;
    this.onclose?.({ code, reason });
  }
}

function harness() {
  const sockets: FakeSocket[] = [];
  const timers: Array<{ cb: () => void; ms: number; cleared: boolean }> = [];
  const stream = new LiveStream({
    baseUrl: () => 'ws://bench.test/ws',
    createSocket: (url) => {
      const s = new FakeSocket(url);
      sockets.push(s);
      return s;
    },
    setTimer: (cb, ms) => {
      const t = { cb, ms, cleared: false };
      timers.push(t);
      return t;
    },
    clearTimer: (h) => {
      (h as { cleared: boolean }).cleared = true;
    },
    random: () => 0,
    initialBackoffMs: 500,
    maxBackoffMs: 4000,
  });
  const fireReconnect = () => {
    const t = timers.filter((x) => !x.cleared && x.ms < 5000).at(-1)!;
    t.cleared = true;
    t.cb();
    return t.ms;
  };
  return { stream, sockets, timers, fireReconnect };
}

const sample = (seq: number, value = 1) => ({ type: 'sample.received', seq, benchId: 'bench-1', device: 'pressure', value, unit: 'kPa', raw: `DP ${value}`, wallMs: 1000 + seq, runId: null });

afterEach(() => useLiveRun.getState().reset());

describe('LiveStream', () => {
  it('connects on the first user, resumes after the last seq with growing backoff, and drops repeats', () => {
    const { stream, sockets, fireReconnect } = harness();
    const seen: number[] = [];
    stream.subscribe((m) => seen.push(m.seq));
    const release = stream.acquire();
    expect(sockets[0]!.url).toBe('ws://bench.test/ws');
    sockets[0]!.open();
    sockets[0]!.emit({ type: 'stream.opened', seq: 0, latestSeq: 0, heartbeatMs: 10_000, epoch: 'e1' });
    sockets[0]!.emit(sample(1));
    sockets[0]!.emit(sample(2));
    sockets[0]!.drop();
    expect(stream.getStatus()).toBe('reconnecting');
    expect(fireReconnect()).toBe(500);
    expect(sockets[1]!.url).toBe('ws://bench.test/ws?since=2&epoch=e1');
    sockets[1]!.drop();
    expect(fireReconnect()).toBe(1000);
    expect(sockets[2]!.url).toBe('ws://bench.test/ws?since=2&epoch=e1');
    sockets[2]!.open();
    expect(stream.getStatus()).toBe('open');
    sockets[2]!.emit(sample(2));
    sockets[2]!.emit(sample(3));
    expect(seen).toEqual([0, 1, 2, 3]);
    release();
    expect(sockets[2]!.closed).toBe(true);
    expect(stream.getStatus()).toBe('closed');
  });

  it('re-sends the watched run after a reconnect and ignores messages outside the contract', () => {
    const { stream, sockets, fireReconnect } = harness();
    stream.acquire();
    stream.watch('run-1');
    sockets[0]!.open();
    expect(sockets[0]!.sent.map((s) => JSON.parse(s))).toEqual([{ type: 'watch', runId: 'run-1' }]);
    sockets[0]!.emit({ type: 'sample.received', seq: 'x' });
    sockets[0]!.onmessage?.({ data: 'not json' });
    expect(stream.rejected).toBe(2);
    sockets[0]!.drop();
    fireReconnect();
    sockets[1]!.open();
    expect(JSON.parse(sockets[1]!.sent[0]!)).toEqual({ type: 'watch', runId: 'run-1' });
  });

  it('reconnects when heartbeats stop', () => {
    const { stream, sockets, timers } = harness();
    stream.acquire();
    sockets[0]!.open();
    sockets[0]!.emit({ type: 'stream.opened', seq: 0, latestSeq: 5, heartbeatMs: 1000, epoch: 'e1' });
    const hb = timers.filter((t) => !t.cleared && t.ms === 2500).at(-1)!;
    hb.cb();
    expect(sockets[0]!.closed).toBe(true);
    expect(stream.getStatus()).toBe('reconnecting');
  });

  it('after a server restart takes the new epoch and numbering from stream.reset and resumes in it', () => {
    const { stream, sockets, fireReconnect } = harness();
    const seen: string[] = [];
    stream.subscribe((m) => seen.push(`${m.type}@${m.seq}`));
    stream.acquire();
    sockets[0]!.open();
    sockets[0]!.emit({ type: 'stream.opened', seq: 40, latestSeq: 40, heartbeatMs: 10_000, epoch: 'old' });
    sockets[0]!.emit(sample(41));
    sockets[0]!.drop();
    fireReconnect();
    expect(sockets[1]!.url).toBe('ws://bench.test/ws?since=41&epoch=old');
    sockets[1]!.open();
    // The restarted server reserved numbers past everything the old one handed out.
    sockets[1]!.emit({ type: 'stream.opened', seq: 50_001, latestSeq: 50_001, heartbeatMs: 10_000, epoch: 'new' });
    sockets[1]!.emit({ type: 'stream.reset', seq: 50_001, epoch: 'new', fromSeq: 41, reason: 'epoch' });
    sockets[1]!.emit(sample(50_001)); // a repeat of the reset point: dropped
    sockets[1]!.emit(sample(50_002));
    expect(seen).toEqual(['stream.opened@40', 'sample.received@41', 'stream.opened@50001', 'stream.reset@50001', 'sample.received@50002']);
    sockets[1]!.drop();
    fireReconnect();
    expect(sockets[2]!.url).toBe('ws://bench.test/ws?since=50002&epoch=new');
  });

  it('stops reconnecting and keeps the reason when the server ends the session (4401)', () => {
    const { stream, sockets, timers } = harness();
    stream.acquire();
    sockets[0]!.open();
    sockets[0]!.emit({ type: 'stream.opened', seq: 0, latestSeq: 0, heartbeatMs: 10_000, epoch: 'e1' });
    const pending = timers.filter((t) => !t.cleared).length;
    sockets[0]!.drop(STREAM_CLOSE.sessionEnded, 'Signed out: your role changed; sign in again');
    expect(stream.getStatus()).toBe('signed-out');
    expect(stream.getNotice()).toBe('Signed out: your role changed; sign in again');
    // No reconnect was scheduled (only the heartbeat timer was cleared).
    expect(timers.filter((t) => !t.cleared && t.ms < 5000).length).toBe(0);
    expect(timers.length).toBe(pending);
    expect(sockets.length).toBe(1);
  });

  it('keeps reconnecting, with the reason shown, when the account has too many connections (4429)', () => {
    const { stream, sockets, fireReconnect } = harness();
    stream.acquire();
    sockets[0]!.open();
    sockets[0]!.drop(STREAM_CLOSE.tooManyConnections, 'Too many live connections for this account (at most 10); close another tab');
    expect(stream.getStatus()).toBe('reconnecting');
    expect(stream.getNotice()).toMatch(/Too many live connections/);
    fireReconnect();
    sockets[1]!.open();
    expect(stream.getStatus()).toBe('open');
    expect(stream.getNotice()).toBeNull();
  });

  it('doubles the reconnect delay on each failure up to its cap, and starts again after an open', () => {
    const { stream, sockets, fireReconnect } = harness();
    stream.acquire();
    const delays: number[] = [];
    for (let i = 0; i < 6; i++) {
      sockets.at(-1)!.drop();
      delays.push(fireReconnect());
    }
    expect(delays).toEqual([500, 1000, 2000, 4000, 4000, 4000]);
    sockets.at(-1)!.open();
    sockets.at(-1)!.drop();
    expect(fireReconnect()).toBe(500);
  });
});

describe('applyStreamMessage', () => {
  const run = { id: 'r1', jobId: 'j1', kind: 'as-found', trim: null, status: 'running', unit: 'kPa', holdSeconds: 30, currentIndex: 0, results: null, modeCheck: null, startedAt: '', endedAt: null, points: [{ index: 0, nominalPct: 10, basis: 'flow', dpPct: 1, targetDp: 1, expectedMa: 5.6, approach: 'up', window: 0.5, state: 'approaching', flags: [], capture: null, warning: null }] } as Run;

  it('routes samples to the store (for the chosen bench only) and patches point states into the run cache', () => {
    const qc = new QueryClient();
    qc.setQueryData(queryKeys.run('r1'), run);
    const store = new LiveSampleStore(8, () => {});
    store.setBench('bench-1');
    applyStreamMessage(sample(1, 4.2) as never, qc, store);
    applyStreamMessage({ ...sample(2, 9), benchId: 'browser-x' } as never, qc, store);
    expect(store.rings.pressure.size).toBe(1);
    applyStreamMessage({ type: 'point.changed', seq: 3, runId: 'r1', index: 0, state: 'holding', flags: ['overshoot'], hold: { elapsedMs: 1000, requiredMs: 30_000 } }, qc, store);
    const after = qc.getQueryData<Run>(queryKeys.run('r1'))!;
    expect(after.points[0]!.state).toBe('holding');
    expect(after.points[0]!.flags).toEqual(['overshoot']);
    expect(useLiveRun.getState().hold).toMatchObject({ runId: 'r1', index: 0, elapsedMs: 1000, requiredMs: 30_000 });
  });

  it('re-reads the runs, the jobs and the bench over HTTP on stream.reset', () => {
    const qc = new QueryClient();
    qc.setQueryData(queryKeys.run('r1'), run);
    qc.setQueryData(queryKeys.jobs, []);
    qc.setQueryData(queryKeys.bench, {});
    applyStreamMessage({ type: 'stream.reset', seq: 9, epoch: 'e2', fromSeq: 3, reason: 'epoch' }, qc, new LiveSampleStore(4, () => {}));
    expect(qc.getQueryState(queryKeys.run('r1'))!.isInvalidated).toBe(true);
    expect(qc.getQueryState(queryKeys.jobs)!.isInvalidated).toBe(true);
    expect(qc.getQueryState(queryKeys.bench)!.isInvalidated).toBe(true);
  });

  it('keeps a leak warning with its rate and drops the hold', () => {
    const qc = new QueryClient();
    useLiveRun.getState().pointChanged({ runId: 'r1', index: 0, state: 'holding', hold: { elapsedMs: 5000, requiredMs: 30_000 } });
    applyStreamMessage({ type: 'run.warned', seq: 4, runId: 'r1', index: 0, kind: 'leak', message: 'Pressure falling', ratePctSpanPerMin: 0.8 }, qc, new LiveSampleStore(4, () => {}));
    const s = useLiveRun.getState();
    expect(s.hold).toBeNull();
    expect(s.warnings).toEqual([expect.objectContaining({ kind: 'leak', ratePctSpanPerMin: 0.8, message: 'Pressure falling' })]);
    qc.setQueryData(queryKeys.run('r1'), run);
    const capture = {
      appliedDp: 1.001, appliedDpSd: 0.001, measuredMa: 5.6, measuredMaSd: 0.001, n: 20, startMs: 1, endMs: 2, leakRatePctSpanPerMin: null,
      manualReason: 'steady by eye', capturedBy: 'tech@example.test', by: { kind: 'user' as const, benchId: 'bench-1', user: { id: 'u1', email: 'tech@example.test' } },
    };
    applyStreamMessage({ type: 'point.captured', seq: 5, runId: 'r1', benchId: 'bench-1', index: 0, manual: true, flags: ['manual'], capture }, qc, new LiveSampleStore(4, () => {}));
    expect(useLiveRun.getState().warnings).toEqual([]);
    // The stored capture reaches the run cache with the message itself.
    const p = qc.getQueryData<Run>(queryKeys.run('r1'))!.points[0]!;
    expect(p).toMatchObject({ state: 'captured', flags: ['manual'], capture });
  });
});
