import { describe, expect, it } from 'vitest';
import { buildPlan, type PlanPoint } from '../../shared/calc';
import { CaptureEngine, type EngineEvent } from './capture-engine';
import type { HubEntry } from './hub';

// Synthetic traces fed straight into the engine (no serial, no clock): 10 readings/s per channel.
const SPAN = 100; // inH2O@68F, rooted output, 0–100
const spec = { range: { lrv: 0, urv: SPAN, unit: 'inH2O@68F' as const }, mode: 'sqrt-transmitter' as const, cutoff: { mode: 'none' as const } };

function plan(): PlanPoint[] {
  const r = buildPlan(spec, { kind: 'custom', points: [{ nominalPct: 50, basis: 'flow', approach: 'up' }], windowPctOfSpan: 0.5 });
  if (!r.ok) throw new Error(r.reason);
  return r.value;
}

const PERFORMER = { id: 'u-tech', email: 'tech@example.test' };
const AGENT = { kind: 'agent' as const, id: 'bench-t' };

function run(dpAt: (tS: number) => number, seconds: number, holdSeconds = 5) {
  const engine = new CaptureEngine('bench-t');
  const events: EngineEvent[] = [];
  engine.on('event', (e) => events.push(e));
  const points = plan();
  engine.start({ runId: 'r1', benchId: 'bench-t', unit: 'inH2O@68F', dpSpan: SPAN, holdSeconds, performer: PERFORMER }, points);
  let seq = 0;
  const entry = (device: 'pressure' | 'current', t: number, value: number): HubEntry => ({
    kind: 'sample', seq: ++seq, benchId: 'bench-t', device, raw: String(value), value, unit: device === 'pressure' ? 'inH2O@68F' : 'mA',
    wallMs: 1_800_000_000_000 + t, monoMs: t, tMs: t, source: AGENT, clientWallMs: null,
  }) as HubEntry;
  for (let i = 0; i <= seconds * 10; i++) {
    const t = i * 100;
    const dp = dpAt(t / 1000);
    engine.consume([entry('pressure', t, dp), entry('current', t + 5, 4 + 16 * Math.sqrt(Math.max(dp, 0) / SPAN))]);
  }
  return { events, snapshot: engine.snapshot() };
}

describe('capture engine: settling is not a leak, a steady decay is', () => {
  const target = 25; // 50 % flow = 25 % DP

  it('captures a first-order approach once the source is isolated, with no leak flag', () => {
    // Approach from below with τ = 1.5 s; isolated (frozen) after 7 s at 99 % of the step.
    const dp = (t: number) => target * (1 - Math.exp(-Math.min(t, 7) / 1.5));
    const { events } = run(dp, 30);
    const captured = events.find((e) => e.type === 'point.captured');
    expect(captured).toBeDefined();
    expect(captured!.type === 'point.captured' && captured!.flags).toEqual([]);
    expect(events.some((e) => e.type === 'run.warned' && e.kind === 'leak')).toBe(false);
    // Hands-free: the capture names the bench, where its samples came from, and the run's performer.
    if (captured?.type !== 'point.captured') throw new Error('no capture');
    expect(captured.benchId).toBe('bench-t');
    expect(captured.manual).toBe(false);
    expect(captured.capture.capturedBy).toBeNull();
    expect(captured.capture.by).toEqual({ kind: 'bench', benchId: 'bench-t', sources: { pressure: AGENT, current: AGENT }, performer: PERFORMER });
  });

  it('warns of a steady leak with its rate and does not capture', () => {
    // Reaches the point, then decays at 0.6 % of span per minute (0.01 inH2O/s) with the source isolated.
    const dp = (t: number) => (t < 3 ? target - 0.4 + (0.4 * t) / 3 : target - 0.01 * (t - 3));
    const { events } = run(dp, 25);
    const leak = events.find((e) => e.type === 'run.warned' && e.kind === 'leak');
    expect(leak).toBeDefined();
    if (leak?.type === 'run.warned') expect(Math.abs(leak.ratePctSpanPerMin!)).toBeCloseTo(0.6, 1);
    expect(events.some((e) => e.type === 'point.captured')).toBe(false);
  });
});
