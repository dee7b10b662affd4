import { describe, expect, it } from 'vitest';
import { buildPlan } from './plan';
import type { TransferSpec } from './transfer';

const range = { lrv: 0, urv: 250, unit: 'inH2O@68F' as const };

describe('plans (point lists: common practice, REFERENCE.md)', () => {
  it('rooted output: 10, 25, 50, 75, 100 % flow up and down', () => {
    const r = buildPlan({ range, mode: 'sqrt-transmitter' }, { kind: 'standard' });
    if (!r.ok) throw new Error(r.reason);
    const p = r.value;
    expect(p.map((x) => x.nominalPct)).toEqual([10, 25, 50, 75, 100, 75, 50, 25, 10]);
    expect(p.map((x) => x.approach)).toEqual(['up', 'up', 'up', 'up', 'up', 'down', 'down', 'down', 'down']);
    expect(p.map((x) => x.index)).toEqual([0, 1, 2, 3, 4, 5, 6, 7, 8]);
    const dp = [1, 6.25, 25, 56.25, 100];
    p.slice(0, 5).forEach((x, i) => {
      expect(x.basis).toBe('flow');
      expect(x.dpPct).toBeCloseTo(dp[i]!, 12);
      expect(x.targetDp).toBeCloseTo(2.5 * dp[i]!, 10);
      expect(x.expectedMa).toBeCloseTo([5.6, 8, 12, 16, 20][i]!, 12);
      expect(x.window).toBeCloseTo(1.25, 12); // 0.5 % of 250 (product default)
    });
  });
  it('linear and host-root: 0, 25, 50, 75, 100 % DP up and down', () => {
    for (const mode of ['linear', 'sqrt-host'] as const) {
      const r = buildPlan({ range, mode }, { kind: 'standard', windowPctOfSpan: 0.2 });
      if (!r.ok) throw new Error(r.reason);
      expect(r.value.map((x) => x.nominalPct)).toEqual([0, 25, 50, 75, 100, 75, 50, 25, 0]);
      expect(r.value.map((x) => x.expectedMa)).toEqual([4, 8, 12, 16, 20, 16, 12, 8, 4]);
      expect(r.value[0]!.window).toBeCloseTo(0.5, 12);
    }
  });
  it('five-point, three-point and custom', () => {
    const spec: TransferSpec = { range: { lrv: 100, urv: 0, unit: 'kPa' }, mode: 'linear' };
    const five = buildPlan(spec, { kind: 'five-point' });
    expect(five.ok && five.value.length).toBe(9);
    const three = buildPlan(spec, { kind: 'three-point' });
    expect(three.ok && three.value.map((x) => [x.targetDp, x.expectedMa])).toEqual([
      [100, 4],
      [50, 12],
      [0, 20],
    ]);
    const custom = buildPlan({ range, mode: 'sqrt-transmitter' }, { kind: 'custom', points: [{ nominalPct: 50, basis: 'dp', approach: 'down' }] });
    expect(custom.ok && custom.value[0]).toMatchObject({ dpPct: 50, approach: 'down' });
    expect(custom.ok && custom.value[0]!.expectedMa).toBeCloseTo(4 + 16 * Math.sqrt(0.5), 12);
    expect(buildPlan(spec, { kind: 'custom', points: [] }).ok).toBe(false);
    expect(buildPlan(spec, { kind: 'standard', windowPctOfSpan: 0 }).ok).toBe(false);
  });
});
