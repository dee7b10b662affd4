import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { hysteresis, leastSquaresLine, minimaxLine, nonLinearity, pointResult, worstError, type CapturedPoint } from './results';
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
    // error up − error down at the same nominal, each referred to its own applied DP (REFERENCE.md)
    expect(h[0]!.hysteresisPctSpan).toBeCloseTo(((12.016 - 11.992) / 16) * 100, 10);
    expect(h[0]!.upErrorPctSpan).toBeCloseTo(0.1, 10);
    // Applied DP not the same twice: 50.2 kPa up reads 12.032 mA, 49.8 kPa down reads 11.968 mA. Both
    // errors are 0, so the hysteresis is 0, where the raw mA difference would say 0.4 % of span.
    const off: CapturedPoint[] = [
      { nominalPct: 50, basis: 'dp', direction: 'up', appliedDp: 50.2, measuredMa: 12.032 },
      { nominalPct: 50, basis: 'dp', direction: 'down', appliedDp: 49.8, measuredMa: 11.968 },
    ];
    const h2 = hysteresis(off, off.map((p) => pointResult(linear, p).errorPctSpan));
    expect(h2[0]!.hysteresisPctSpan).toBeCloseTo(0, 10);
  });
  it('non-linearity by the ISA-51.1 definitions, signed, with where it occurs (hand-derived data set)', () => {
    // Errors 0, 0.08, 0.10, 0.06, 0.02 % of span at 0, 25, 50, 75, 100 % (linear output). Derived by hand:
    // terminal-based: line 0.0002·x through the end points; deviations 0.075, 0.09, 0.045 → +0.09 at 50 %.
    // independent (minimax): by the alternation theorem, the chord 0–100 moved up halfway to the
    //   50 % point, y = 0.045 + 0.0002·x, deviations −0.045, +0.045, −0.045 at 0, 50, 100 % → 0.045.
    // zero-based: through (0, 0), slope 0.0008 balances 25 % and 50 % (+0.06) against 100 % (−0.06) → 0.06.
    // least squares: slope 0.5/6250 = 0.00008, offset 0.048; deviations −0.048 at 0 %, +0.048 at 50 % → 0.048.
    const ys = [0, 0.08, 0.1, 0.06, 0.02];
    const pts: CapturedPoint[] = [0, 25, 50, 75, 100].map((n) => ({ nominalPct: n, basis: 'dp', direction: 'up', appliedDp: n, measuredMa: 0 }));
    const nl = nonLinearity(linear, pts, ys)!;
    expect(nl.terminalBased.pctSpan).toBeCloseTo(0.09, 12);
    expect(nl.terminalBased.atOutputPct).toBe(50);
    expect(nl.terminalBased.line.slope).toBeCloseTo(0.0002, 14);
    expect(Math.abs(nl.independent.pctSpan)).toBeCloseTo(0.045, 12);
    expect(nl.independent.line.offsetPctSpan).toBeCloseTo(0.045, 12);
    expect(nl.independent.line.slope).toBeCloseTo(0.0002, 14);
    expect(Math.abs(nl.zeroBased.pctSpan)).toBeCloseTo(0.06, 12);
    expect(nl.zeroBased.line.slope).toBeCloseTo(0.0008, 14);
    expect(nl.zeroBased.line.offsetPctSpan).toBe(0);
    expect(Math.abs(nl.leastSquares.pctSpan)).toBeCloseTo(0.048, 12);
    expect(nl.leastSquares.line.slope).toBeCloseTo(0.00008, 14);
    expect(nl.anchorLowOutputPct).toBe(0);
    // a straight error line has no non-linearity by any definition
    const nl2 = nonLinearity(linear, pts, [0.1, 0.15, 0.2, 0.25, 0.3])!;
    for (const f of [nl2.terminalBased, nl2.zeroBased, nl2.independent, nl2.leastSquares]) expect(f.pctSpan).toBeCloseTo(0, 12);
    expect(nonLinearity(linear, pts.slice(0, 1), [0])).toBeUndefined();
  });
  it('minimax line: the three-point case by hand, and never beaten by another line', () => {
    // (0, 0), (1, 1), (2, 0): the chord is y = 0; halfway to (1, 1) gives y = 0.5, deviation 0.5 (least squares: y = 1/3, 2/3).
    expect(minimaxLine([{ x: 0, y: 0 }, { x: 1, y: 1 }, { x: 2, y: 0 }])).toEqual({ offsetPctSpan: 0.5, slope: 0 });
    const maxDev = (xy: { x: number; y: number }[], a: number, b: number) => Math.max(...xy.map((p) => Math.abs(p.y - a - b * p.x)));
    fc.assert(
      fc.property(
        fc.uniqueArray(fc.integer({ min: 0, max: 100 }), { minLength: 3, maxLength: 9 }),
        fc.array(fc.double({ min: -1, max: 1, noNaN: true }), { minLength: 9, maxLength: 9 }),
        fc.double({ min: -0.05, max: 0.05, noNaN: true }),
        fc.double({ min: -0.001, max: 0.001, noNaN: true }),
        (xs, ys, da, db) => {
          const xy = xs.map((x, i) => ({ x, y: ys[i]! }));
          const m = minimaxLine(xy);
          const best = maxDev(xy, m.offsetPctSpan, m.slope);
          expect(best).toBeLessThanOrEqual(maxDev(xy, m.offsetPctSpan + da, m.slope + db) + 1e-12);
          const ls = leastSquaresLine(xy);
          expect(best).toBeLessThanOrEqual(maxDev(xy, ls.offsetPctSpan, ls.slope) + 1e-12);
        },
      ),
    );
  });
  it('worst error', () => {
    expect(worstError([0.1, -0.3, 0.2])).toEqual({ index: 1, errorPctSpan: -0.3 });
  });
});
