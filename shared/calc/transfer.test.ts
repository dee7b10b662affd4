import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import {
  classifyNe43,
  dpFromMa,
  dpPctFromFlowPct,
  flowPctFromDpPct,
  maFromDp,
  sensitivityMaPerUnit,
  type Cutoff,
  type OutputMode,
  type TransferSpec,
} from './transfer';
import { pctDp, pctFlow } from './units';

const pct: TransferSpec['range'] = { lrv: 0, urv: 100, unit: 'kPa' };
const rooted: TransferSpec = { range: pct, mode: 'sqrt-transmitter' };
const linear: TransferSpec = { range: pct, mode: 'linear' };

describe('transfer functions (check values: common practice, REFERENCE.md)', () => {
  it('rooted / linear mA table', () => {
    expect(flowPctFromDpPct(pctDp(25))).toBeCloseTo(50, 12); // 25 % DP → 50 % flow
    expect(dpPctFromFlowPct(pctFlow(10))).toBeCloseTo(1, 12); // 10 % flow = 1 % DP
    expect(maFromDp(rooted, 1)).toBeCloseTo(5.6, 12); // 1 % DP → 5.600 mA rooted
    expect(maFromDp(linear, 1)).toBeCloseTo(4.16, 12); // 1 % DP → 4.160 mA linear
    expect(maFromDp(rooted, 25)).toBeCloseTo(12, 12); // 25 % DP → 12 mA rooted
    expect(maFromDp(linear, 25)).toBeCloseTo(8, 12); // 25 % DP → 8 mA linear
    expect(flowPctFromDpPct(pctDp(6.25))).toBeCloseTo(25, 12); // 6.25 % DP → 25 % flow
    expect(maFromDp(rooted, 6.25)).toBeCloseTo(8, 12); // → 8 mA
    expect(maFromDp({ range: pct, mode: 'sqrt-host' }, 25)).toBeCloseTo(8, 12); // host root: transmitter linear
  });

  it('gain near zero d(flow%)/d(DP%) = 5/√DP%', () => {
    // at 1 % DP: 5 %flow per %DP → 16·5/100 mA per kPa on a 0–100 kPa range
    expect(sensitivityMaPerUnit(rooted, 1)).toBeCloseTo(0.8, 12);
    expect(sensitivityMaPerUnit(rooted, 0)).toBeUndefined();
    expect(sensitivityMaPerUnit(linear, 0)).toBeCloseTo(0.16, 12);
  });

  it('cutoff modes', () => {
    // none: pure root
    expect(flowPctFromDpPct(pctDp(0.25), { mode: 'none' })).toBeCloseTo(5, 12);
    // clamp at 10 % flow: below → 0 (4 mA), at and above → root
    const clamp: Cutoff = { mode: 'clamp', flowPct: 10 };
    expect(flowPctFromDpPct(pctDp(0.81), clamp)).toBe(0);
    expect(maFromDp({ range: pct, mode: 'sqrt-transmitter', cutoff: clamp }, 0.81)).toBe(4);
    expect(flowPctFromDpPct(pctDp(1), clamp)).toBeCloseTo(10, 12);
    expect(dpPctFromFlowPct(pctFlow(0), clamp)).toBeUndefined();
    expect(dpFromMa({ range: pct, mode: 'sqrt-transmitter', cutoff: clamp }, 4)).toBeUndefined();
    // linear below b = 1 % DP: flow% = (10/√b)·DP%, continuous at b
    const lin: Cutoff = { mode: 'linear', breakpointDpPct: 1 };
    expect(flowPctFromDpPct(pctDp(0.5), lin)).toBeCloseTo(5, 12);
    expect(flowPctFromDpPct(pctDp(1 - 1e-12), lin)).toBeCloseTo(flowPctFromDpPct(pctDp(1), lin), 9);
    const lin4: Cutoff = { mode: 'linear', breakpointDpPct: 4 };
    expect(flowPctFromDpPct(pctDp(2), lin4)).toBeCloseTo(10, 12); // (10/2)·2
    expect(flowPctFromDpPct(pctDp(4), lin4)).toBeCloseTo(20, 12); // root at b
  });

  it('elevated, suppressed and reversed ranges', () => {
    const elevated: TransferSpec = { range: { lrv: -50, urv: 50, unit: 'kPa' }, mode: 'linear' };
    expect(maFromDp(elevated, 0)).toBeCloseTo(12, 12);
    const suppressed: TransferSpec = { range: { lrv: 20, urv: 120, unit: 'kPa' }, mode: 'sqrt-transmitter' };
    expect(maFromDp(suppressed, 45)).toBeCloseTo(12, 12);
    const reversed: TransferSpec = { range: { lrv: 100, urv: 0, unit: 'kPa' }, mode: 'linear' };
    expect(maFromDp(reversed, 100)).toBeCloseTo(4, 12);
    expect(maFromDp(reversed, 25)).toBeCloseTo(16, 12);
    expect(dpFromMa(reversed, 8)).toBeCloseTo(75, 12);
  });

  it('NAMUR NE 43 (2021) bands', () => {
    expect(classifyNe43(3.6).class).toBe('failure-low');
    expect(classifyNe43(3.7).class).toBe('undefined-low');
    expect(classifyNe43(3.8).class).toBe('saturation-low');
    expect(classifyNe43(3.99).isMeasurement).toBe(true);
    expect(classifyNe43(4).class).toBe('measurement');
    expect(classifyNe43(20).class).toBe('measurement');
    expect(classifyNe43(20.2).class).toBe('saturation-high');
    expect(classifyNe43(20.5).class).toBe('saturation-high');
    expect(classifyNe43(20.7).class).toBe('undefined-high');
    expect(classifyNe43(21).class).toBe('failure-high');
    expect(classifyNe43(21).isFailure).toBe(true);
    expect(classifyNe43(3.7).isMeasurement).toBe(false);
  });

  const modeArb = fc.constantFrom<OutputMode>('linear', 'sqrt-transmitter', 'sqrt-host');
  const cutoffArb = fc.oneof(
    fc.constant<Cutoff>({ mode: 'none' }),
    fc.double({ min: 0.5, max: 20, noNaN: true }).map<Cutoff>((flowPct) => ({ mode: 'clamp', flowPct })),
    fc.double({ min: 0.1, max: 10, noNaN: true }).map<Cutoff>((b) => ({ mode: 'linear', breakpointDpPct: b })),
  );
  const rangeArb = fc
    .tuple(fc.double({ min: -1e4, max: 1e4, noNaN: true }), fc.double({ min: 1, max: 1e4, noNaN: true }), fc.boolean())
    .map(([lrv, s, rev]) => (rev ? { lrv: lrv + s, urv: lrv, unit: 'kPa' as const } : { lrv, urv: lrv + s, unit: 'kPa' as const }));

  it('inverse ∘ forward is identity for every mode, cutoff and range orientation (property)', () => {
    fc.assert(
      fc.property(rangeArb, modeArb, cutoffArb, fc.double({ min: -10, max: 110, noNaN: true }), (range, mode, cutoff, dpPct) => {
        const spec: TransferSpec = { range, mode, cutoff };
        const dp = range.lrv + (dpPct / 100) * (range.urv - range.lrv);
        const back = dpFromMa(spec, maFromDp(spec, dp));
        if (back === undefined) {
          // only inside a clamp cutoff is the inverse not unique
          expect(mode === 'sqrt-transmitter' && cutoff.mode === 'clamp').toBe(true);
          return;
        }
        expect(Math.abs(back - dp)).toBeLessThanOrEqual(1e-9 * Math.max(1, Math.abs(range.urv - range.lrv), Math.abs(dp)));
      }),
    );
  });

  it('flow is monotonic (non-decreasing) in DP (property)', () => {
    fc.assert(
      fc.property(cutoffArb, fc.double({ min: -50, max: 150, noNaN: true }), fc.double({ min: -50, max: 150, noNaN: true }), (c, a, b) => {
        const [lo, hi] = a <= b ? [a, b] : [b, a];
        expect(flowPctFromDpPct(pctDp(lo), c)).toBeLessThanOrEqual(flowPctFromDpPct(pctDp(hi), c));
      }),
    );
  });
});
