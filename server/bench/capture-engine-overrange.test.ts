import { describe, expect, it } from 'vitest';
import { buildPlan } from '../../shared/calc';
import { CaptureEngine, type EngineEvent } from './capture-engine';
import type { HubEntry } from './hub';

// The over-range warning (issue 13): synthetic DP fed straight into the engine, 10 readings/s.
const SPAN = 25; // kPa, 0–25, rooted output
const spec = { range: { lrv: 0, urv: SPAN, unit: 'kPa' as const }, mode: 'sqrt-transmitter' as const, cutoff: { mode: 'none' as const } };

function run(dpAt: (tS: number) => number, seconds: number, overrangeAbove: number | undefined) {
  const r = buildPlan(spec, { kind: 'custom', points: [{ nominalPct: 100, basis: 'flow', approach: 'up' }], windowPctOfSpan: 0.5 });
  if (!r.ok) throw new Error(r.reason);
  const engine = new CaptureEngine('bench-t');
  const events: EngineEvent[] = [];
  engine.on('event', (e) => events.push(e));
  engine.start({ runId: 'r1', benchId: 'bench-t', unit: 'kPa', dpSpan: SPAN, holdSeconds: 5, ...(overrangeAbove !== undefined ? { overrangeAbove } : {}) }, r.value);
  let seq = 0;
  const entry = (t: number, value: number): HubEntry =>
    ({ kind: 'sample', seq: ++seq, benchId: 'bench-t', device: 'pressure', raw: String(value), value, unit: 'kPa', wallMs: 1_800_000_000_000 + t, monoMs: t, tMs: t, source: { kind: 'agent', id: 'b' }, clientWallMs: null }) as HubEntry;
  for (let i = 0; i <= seconds * 10; i++) engine.consume([entry(i * 100, dpAt(i / 10))]);
  return events.filter((e): e is Extract<EngineEvent, { type: 'run.warned' }> => e.type === 'run.warned' && e.kind === 'overrange');
}

describe('capture engine: over-range warning', () => {
  // URV 25 kPa + 10 % of span = 27.5 kPa.
  const limit = 27.5;

  it('warns once when the applied pressure passes the URV by more than the margin, naming the value and the limit', () => {
    const warned = run((t) => (t < 2 ? 12 * t : 30), 6, limit);
    expect(warned).toHaveLength(1);
    // DP written as the screens write it: the span's decimals (shared/format dpDecimals: 3 for a 25 kPa span).
    expect(warned[0]!.message).toContain('30.000 kPa');
    expect(warned[0]!.message).toContain('27.500 kPa');
  });

  it('stays quiet within the margin, and warns again after the pressure came back down and went over again', () => {
    expect(run((t) => Math.min(26.5, 10 * t), 6, limit)).toHaveLength(0);
    const twice = run((t) => (t < 2 ? 30 : t < 4 ? 20 : 31), 6, limit);
    expect(twice).toHaveLength(2);
  });

  it('never warns without a limit (older runs)', () => {
    expect(run(() => 40, 3, undefined)).toHaveLength(0);
  });
});
