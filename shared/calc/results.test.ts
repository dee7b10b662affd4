import { describe, expect, it } from 'vitest';
import { hysteresis, nonLinearity, pointResult, worstError, type CapturedPoint } from './results';
import type { TransferSpec } from './transfer';

const rooted: TransferSpec = { range: { lrv: 0, urv: 100, unit: 'kPa' }, mode: 'sqrt-transmitter' };
const linear: TransferSpec = { range: { lrv: 0, urv: 100, unit: 'kPa' }, mode: 'linear' };

describe('results', () => {
  it('applied flow and expected mA from the ACTUAL applied DP', () => {
    const r = pointResult(rooted, { nominalPct: 50, basis: 'flow', direction: 'up', appliedDp: 25.2, measuredMa: 12.04 });
    expect(r.appliedFlowPct).toBeCloseTo(10 * Math.sqrt(25.2), 12);
    expect(r.expectedMa).toBeCloseTo(4 + 0.16 * 10 * Math.sqrt(25.2), 12);
    expect(r.errorPctSpan).toBeCloseTo(((12.04 - r.expectedMa) / 16) * 100, 12);
  });
  it('error in % of flow span and its DP equivalent', () => {
    // 12.016 mA at 25 kPa: error 0.1 % of flow span; indicated flow 50.1 % → DP 25.1001 kPa
    const r = pointResult(rooted, { nominalPct: 50, basis: 'flow', direction: 'up', appliedDp: 25, measuredMa: 12.016 });
    expect(r.errorPctSpan).toBeCloseTo(0.1, 10);
    expect(r.dpEquivalentError).toBeCloseTo(50.1 ** 2 / 100 - 25, 10);
    const l = pointResult(linear, { nominalPct: 50, basis: 'dp', direction: 'up', appliedDp: 50, measuredMa: 12.016 });
    expect(l.appliedFlowPct).toBeUndefined();
    expect(l.dpEquivalentError).toBeCloseTo(0.1, 10);
  });
  it('hysteresis |I_up − I_down|/16 × 100 at matching nominal', () => {
    const pts: CapturedPoint[] = [
      { nominalPct: 50, basis: 'dp', direction: 'up', appliedDp: 50, measuredMa: 12.016 },
      { nominalPct: 100, basis: 'dp', direction: 'up', appliedDp: 100, measuredMa: 20 },
      { nominalPct: 50, basis: 'dp', direction: 'down', appliedDp: 50, measuredMa: 11.992 },
    ];
    const errs = pts.map((p) => pointResult(linear, p).errorPctSpan);
    const h = hysteresis(pts, errs);
    expect(h).toHaveLength(1);
    expect(h[0]!.hysteresisPctSpan).toBeCloseTo(((12.016 - 11.992) / 16) * 100, 10);
  });
  it('terminal-based and least-squares non-linearity (ISA-51.1)', () => {
    const pts: CapturedPoint[] = [0, 50, 100].map((n) => ({ nominalPct: n, basis: 'dp', direction: 'up', appliedDp: n, measuredMa: 0 }));
    // a bump of 0.1 at mid-scale: terminal line 0 → dev 0.1; LS line y = 1/30 → max dev 0.1 − 1/30
    const nl = nonLinearity(linear, pts, [0, 0.1, 0])!;
    expect(nl.terminalBasedPctSpan).toBeCloseTo(0.1, 12);
    expect(nl.leastSquaresPctSpan).toBeCloseTo(0.1 - 0.1 / 3, 12);
    // a straight error line has no non-linearity
    const nl2 = nonLinearity(linear, pts, [0.1, 0.2, 0.3])!;
    expect(nl2.terminalBasedPctSpan).toBeCloseTo(0, 12);
    expect(nl2.leastSquaresPctSpan).toBeCloseTo(0, 12);
    expect(nonLinearity(linear, pts.slice(0, 1), [0])).toBeUndefined();
  });
  it('worst error', () => {
    expect(worstError([0.1, -0.3, 0.2])).toEqual({ index: 1, errorPctSpan: -0.3 });
  });
});
