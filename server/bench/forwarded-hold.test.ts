/**
 * Forwarded lines through the engine: a backlog line (held by its sender through a dropped link)
 * never counts toward a hold, and the capture names where its readings came from.
 */
import { describe, expect, it } from 'vitest';
import { buildPlan, type PlanPoint } from '../../shared/calc';
import { CaptureEngine, type EngineEvent } from './capture-engine';
import type { HubEntry, SampleSource } from './hub';

const SPAN = 100;
const spec = { range: { lrv: 0, urv: SPAN, unit: 'inH2O@68F' as const }, mode: 'sqrt-transmitter' as const, cutoff: { mode: 'none' as const } };
const TARGET = 25; // 50 % flow = 25 % DP
const MA = 12;

function plan(): PlanPoint[] {
  const r = buildPlan(spec, { kind: 'custom', points: [{ nominalPct: 50, basis: 'flow', approach: 'up' }], windowPctOfSpan: 0.5 });
  if (!r.ok) throw new Error(r.reason);
  return r.value;
}

function rig() {
  const engine = new CaptureEngine('agent-9');
  const events: EngineEvent[] = [];
  engine.on('event', (e) => events.push(e));
  engine.start({ runId: 'r1', benchId: 'agent-9', unit: 'inH2O@68F', dpSpan: SPAN, holdSeconds: 5 }, plan());
  let seq = 0;
  const source: SampleSource = { kind: 'agent', id: 'agent-9' };
  const entry = (device: 'pressure' | 'current', t: number, value: number, backlog = false): HubEntry => ({
    kind: 'sample',
    seq: ++seq,
    benchId: 'agent-9',
    device,
    raw: String(value),
    value,
    unit: device === 'pressure' ? 'inH2O@68F' : 'mA',
    wallMs: 1_800_000_000_000 + t,
    monoMs: t,
    tMs: t,
    runId: 'r1',
    source,
    clientWallMs: 1_800_000_000_000 + t,
    ...(backlog ? { backlog: true } : {}),
  });
  /** Steady readings at the point every 100 ms over [from, to) ms. */
  const steady = (from: number, to: number, backlog = false) => {
    for (let t = from; t < to; t += 100) engine.consume([entry('pressure', t, TARGET + ((t / 100) % 3 === 0 ? 0.001 : -0.001), backlog), entry('current', t + 5, MA, backlog)]);
  };
  engine.consume([entry('pressure', 0, TARGET - 3), entry('current', 5, 11)]);
  return { engine, events, steady, captured: () => events.find((e) => e.type === 'point.captured') };
}

describe('forwarded lines in a hold', () => {
  it('captures after the hold from live lines, naming the agent as the source', () => {
    const r = rig();
    r.steady(100, 7000);
    const c = r.captured();
    expect(c?.type === 'point.captured' && c.capture.capturedFrom).toBe('agent:agent-9');
  });

  it('a backlog line throws the hold away: the hold restarts from the next live line', () => {
    const r = rig();
    r.steady(100, 4000);
    expect(r.captured()).toBeUndefined();
    // A backlog batch arrives (resent after a reconnect): it may not complete the hold.
    r.steady(4000, 6000, true);
    expect(r.captured()).toBeUndefined();
    expect(r.engine.snapshot()!.points[0]!.state).toBe('approaching');
    // Live lines again: 4 s is not enough, the full hold (5 s) from the first live line is.
    r.steady(6000, 10_000);
    expect(r.captured()).toBeUndefined();
    r.steady(10_000, 12_000);
    const c = r.captured();
    expect(c).toBeDefined();
    expect(c!.type === 'point.captured' && c!.capture.endMs - c!.capture.startMs).toBeGreaterThanOrEqual(5000);
    expect(c!.type === 'point.captured' && c!.capture.startMs).toBeGreaterThanOrEqual(1_800_000_000_000 + 6000);
  });
});
