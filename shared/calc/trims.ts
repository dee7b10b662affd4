/**
 * Trim plan per output mode (common practice, REFERENCE.md and DESIGN.md §1):
 * root in the transmitter — lower trim at 10 % flow = 1 % DP (5.6 mA) and span trim at 100 %
 * (20 mA), never a zero trim at 0 % DP, where the root's gain is unbounded and the cutoff holds the
 * output at 4 mA; linear and root in the host — zero trim at 0 % (4 mA) and span trim at 100 % (20 mA).
 */
import { dpFromDpPct, isRootedOutput, maFromOutputPct, type TransferSpec, flowPctFromDpPct } from './transfer';
import { pctDp, pctFlow, pctSpan, type MilliAmp } from './units';

/** Trim kinds. */
export type TrimKind = 'zero-trim' | 'lower-trim' | 'span-trim';

/** One trim step. */
export interface TrimStep {
  kind: TrimKind;
  /** DP to apply, % of DP span. */
  dpPct: number;
  /** Flow % at that DP when the output is rooted, else undefined. */
  flowPct: number | undefined;
  /** DP to apply, instrument unit. */
  targetDp: number;
  /** Current the transmitter must read after the trim, mA. */
  expectedMa: MilliAmp;
}

/** Trim plan with any warnings (e.g. a clamp cutoff above the lower-trim point). */
export interface TrimPlan {
  steps: TrimStep[];
  warnings: string[];
}

/** What to trim and where, for the instrument's output mode. */
export function trimPlan(spec: TransferSpec): TrimPlan {
  const warnings: string[] = [];
  if (isRootedOutput(spec.mode)) {
    const cutoff = spec.cutoff ?? { mode: 'none' };
    if (cutoff.mode === 'clamp' && cutoff.flowPct > 10) warnings.push('clamp cutoff above 10 % flow: the lower-trim point reads 4 mA');
    if (cutoff.mode === 'linear' && cutoff.breakpointDpPct > 1) warnings.push('linear cutoff breakpoint above 1 % DP: the lower-trim point is on the linear segment');
    const lowFlow = flowPctFromDpPct(pctDp(1), { mode: 'none' });
    // Root in the transmitter: its output % is the flow %.
    return {
      steps: [
        { kind: 'lower-trim', dpPct: pctDp(1), flowPct: lowFlow, targetDp: dpFromDpPct(spec.range, pctDp(1)), expectedMa: maFromOutputPct(pctSpan(lowFlow)) },
        { kind: 'span-trim', dpPct: pctDp(100), flowPct: pctFlow(100), targetDp: dpFromDpPct(spec.range, pctDp(100)), expectedMa: maFromOutputPct(pctSpan(100)) },
      ],
      warnings,
    };
  }
  return {
    steps: [
      { kind: 'zero-trim', dpPct: pctDp(0), flowPct: undefined, targetDp: dpFromDpPct(spec.range, pctDp(0)), expectedMa: maFromOutputPct(pctSpan(0)) },
      { kind: 'span-trim', dpPct: pctDp(100), flowPct: undefined, targetDp: dpFromDpPct(spec.range, pctDp(100)), expectedMa: maFromOutputPct(pctSpan(100)) },
    ],
    warnings,
  };
}
