/**
 * The % brands (units.ts) at the type level: `tsc` (npm test's types lane) checks every
 * `@ts-expect-error` below, and fails on one whose line compiles, so a brand that stops refusing a
 * mix-up fails the run. The runtime lines check that the explicit conversions give the check values
 * of REFERENCE.md (common practice: 25 % DP is 50 % flow through a root; 10 % flow is 1 % DP).
 */
import { describe, expect, it } from 'vitest';
import { dpFromDpPct, dpPctFromDp, dpPctFromFlowPct, flowPctFromDpPct, maFromOutputPct, outputPctFromDpPct, type TransferSpec } from './transfer';
import { pctDp, pctFlow, pctSpan, type PctDp, type PctFlow, type PctSpan } from './units';

const range: TransferSpec['range'] = { lrv: 0, urv: 200, unit: 'kPa' };
const rooted: TransferSpec = { range, mode: 'sqrt-transmitter' };

describe('% of DP, % of flow and % of span are different types', () => {
  it('refuses a % of one span where another is expected, and a plain number where a % is expected', () => {
    const dp: PctDp = pctDp(25);
    const flow: PctFlow = flowPctFromDpPct(dp);

    // @ts-expect-error a % of DP passed where a % of flow is expected
    dpPctFromFlowPct(dp);
    // @ts-expect-error a % of flow passed where a % of DP is expected
    flowPctFromDpPct(flow);
    // @ts-expect-error a % of flow is not a DP % for the range
    dpFromDpPct(range, flow);
    // @ts-expect-error a % of DP is not an output % (on a rooted output they differ)
    maFromOutputPct(dp);
    // @ts-expect-error a plain number says no basis
    flowPctFromDpPct(25);
    // @ts-expect-error one brand is not assignable to another
    const wrong: PctFlow = dp;
    // @ts-expect-error nor is a plain number
    const plain: PctSpan = 50;

    // A branded % is still a number for arithmetic and display.
    const asNumber: number = flow;
    expect([wrong, plain, asNumber]).toEqual([25, 50, 50]);
  });

  it('converts only through the named functions or an explicit brand', () => {
    expect(flowPctFromDpPct(pctDp(25))).toBeCloseTo(50, 12);
    expect(dpPctFromFlowPct(pctFlow(10))).toBeCloseTo(1, 12);
    expect(dpPctFromDp(range, 50)).toBeCloseTo(25, 12);
    expect(dpFromDpPct(range, pctDp(25))).toBeCloseTo(50, 12);
    // Rooted output: the output % is the flow %, so 25 % DP gives 50 % of the output span, 12 mA.
    expect(outputPctFromDpPct(rooted, pctDp(25))).toBeCloseTo(50, 12);
    expect(maFromOutputPct(pctSpan(50))).toBeCloseTo(12, 12);
  });
});
