import { describe, expect, it } from 'vitest';
import { trimPlan } from './trims';

const range = { lrv: 0, urv: 200, unit: 'mbar' as const };

describe('trims (common practice, DESIGN.md §1)', () => {
  it('root in transmitter: lower trim at 10 % flow = 1 % DP (5.6 mA) and span trim, never zero trim', () => {
    const p = trimPlan({ range, mode: 'sqrt-transmitter' });
    expect(p.steps.map((s) => s.kind)).toEqual(['lower-trim', 'span-trim']);
    expect(p.steps[0]!.targetDp).toBeCloseTo(2, 12);
    expect(p.steps[0]!.flowPct).toBeCloseTo(10, 12);
    expect(p.steps[0]!.expectedMa).toBeCloseTo(5.6, 12);
    expect(p.steps[1]).toMatchObject({ targetDp: 200, expectedMa: 20 });
    expect(p.warnings).toEqual([]);
    expect(trimPlan({ range, mode: 'sqrt-transmitter', cutoff: { mode: 'clamp', flowPct: 15 } }).warnings).toHaveLength(1);
  });
  it('linear and host root: zero at 0 % (4 mA) and span at 100 % (20 mA)', () => {
    for (const mode of ['linear', 'sqrt-host'] as const) {
      const p = trimPlan({ range, mode });
      expect(p.steps.map((s) => [s.kind, s.targetDp, s.expectedMa])).toEqual([
        ['zero-trim', 0, 4],
        ['span-trim', 200, 20],
      ]);
    }
  });
});
