import { useEffect, useState } from 'react';
import type { RunPoint } from '../../../../shared/schemas/runs';
import { Badge } from '../../../components/ui/badge';
import { cn } from '../../../lib/cn';
import { formatFixed, formatNumber } from '../../../lib/format';
import { holdRemainingMs, useLiveRun } from '../../../stores/live-run';
import { approachWords, nominalWords } from '../lib/live-values';
import { StateMark, type MarkState } from './state-mark';

export const STATE_LABEL: Record<RunPoint['state'], string> = {
  waiting: 'Waiting',
  approaching: 'Approaching',
  settling: 'Settling',
  holding: 'Holding',
  captured: 'Captured',
};

/** Point flags in words. */
export const FLAG_LABEL: Record<string, string> = { leak: 'Leak', overshoot: 'Overshoot', unstable: 'Unstable', manual: 'Manual' };

/** Re-renders every `ms` while `active`. */
function useTicker(active: boolean, ms = 200): number {
  const [now, setNow] = useState(() => Date.now());
  useEffect(() => {
    if (!active) return;
    const t = setInterval(() => setNow(Date.now()), ms);
    return () => clearInterval(t);
  }, [active, ms]);
  return now;
}

/** What the technician does now, in words, for the point's state (paused overrides the state). */
export function stateCaption(state: RunPoint['state'], paused: boolean, holdSeconds: number): string {
  if (paused) return 'Run paused: nothing is captured. Resume to go on; the hold starts again once both readings are steady.';
  if (state === 'settling') return 'Waiting for both readings to settle';
  if (state === 'approaching') return 'Move towards the target';
  if (state === 'captured') return 'Captured';
  return `Hold ${holdSeconds} s once steady`;
}

/**
 * The current point: its nominal, target and approach direction, its state, and the hold
 * countdown in numerals readable from two metres, with a ring that fills as the hold runs.
 * While the run is paused the point reads as paused everywhere (state, caption, ring).
 */
export function CurrentPoint({
  runId,
  point,
  total,
  holdSeconds,
  unitLabel,
  dpDecimals,
  paused,
  targetFlow,
}: {
  runId: string;
  point: RunPoint;
  total: number;
  holdSeconds: number;
  unitLabel: string;
  dpDecimals: number;
  paused: boolean;
  /** The point's target flow in engineering units (orifice primary element), e.g. "24.83 m³/h". */
  targetFlow?: string | undefined;
}) {
  const hold = useLiveRun((s) => (s.hold && s.hold.runId === runId && s.hold.index === point.index ? s.hold : null));
  const holding = point.state === 'holding' && !paused;
  const now = useTicker(holding && !!hold);
  const remainingMs = hold ? holdRemainingMs(hold, now) : holdSeconds * 1000;
  const requiredMs = hold?.requiredMs ?? holdSeconds * 1000;
  const fraction = holding && hold ? 1 - remainingMs / requiredMs : point.state === 'captured' ? 1 : 0;
  const arrow = point.approach === 'up' ? '↑' : '↓';
  const shown: MarkState = paused ? 'paused' : point.state;

  return (
    <section
      aria-label="Current point"
      data-testid="current-point"
      data-index={point.index}
      data-state={point.state}
      data-paused={paused ? 'true' : undefined}
      className="grid grid-cols-[auto_minmax(0,1fr)] items-center gap-x-4 gap-y-3 rounded-card border border-line bg-surface p-4 shadow-card sm:gap-x-6 sm:p-5 md:grid-cols-[auto_minmax(0,1fr)_auto]"
    >
      <HoldRing fraction={fraction} state={shown} label={holding ? String(Math.ceil(remainingMs / 1000)) : point.state === 'captured' ? '✓' : '—'} />
      <div className="min-w-0">
        <p className="text-sm font-medium whitespace-nowrap text-ink-muted">
          Point <span className="num text-ink">{point.index + 1}</span> of <span className="num">{total}</span>
        </p>
        <p className="mt-1 text-2xl font-semibold tracking-tight text-ink sm:text-3xl">
          <span className="num">{nominalWords(point)}</span>{' '}
          <span className="text-accent" aria-hidden="true">
            {arrow}
          </span>
        </p>
        <p className="mt-1 text-base text-ink sm:text-lg" data-testid="approach">
          Set{' '}
          <span className="whitespace-nowrap">
            <span className="num font-semibold">{formatFixed(point.targetDp, dpDecimals)}</span> {unitLabel}
          </span>
          {targetFlow && (
            <>
              {' '}
              (<span className="num" data-testid="target-flow">{targetFlow}</span>)
            </>
          )}{' '}
          — <span className="font-semibold">{approachWords(point.approach)}</span>
        </p>
        <p className="mt-1 text-sm text-ink-muted">
          <span className="num">window ±{formatNumber(point.window, dpDecimals + 1)}</span> {unitLabel} · <span className="num">expect {formatNumber(point.expectedMa, 3)} mA</span>
        </p>
      </div>
      <div className="col-span-2 flex flex-wrap items-center gap-x-3 gap-y-2 md:col-span-1 md:flex-col md:items-end">
        <span data-testid="current-point-state" data-state={shown}>
          <Badge tone={paused ? 'warn' : point.state} className="gap-2 px-3 py-1 text-base">
            <StateMark state={shown} className="size-3.5" />
            {paused ? 'Paused' : STATE_LABEL[point.state]}
          </Badge>
        </span>
        {point.flags.length > 0 && (
          <div className="flex flex-wrap gap-1">
            {point.flags.map((f) => (
              <Badge key={f} tone={f}>
                {FLAG_LABEL[f] ?? f}
              </Badge>
            ))}
          </div>
        )}
        <p className="min-w-0 text-sm text-ink-muted md:max-w-64 md:text-right" data-testid="hold-caption">
          {holding ? (
            <>
              Hold: <span className="num text-ink">{Math.ceil(remainingMs / 1000)}</span> s of <span className="num">{Math.round(requiredMs / 1000)}</span> s left
            </>
          ) : (
            stateCaption(point.state, paused, holdSeconds)
          )}
        </p>
      </div>
    </section>
  );
}

function HoldRing({ fraction, state, label }: { fraction: number; state: MarkState; label: string }) {
  const r = 52;
  const c = 2 * Math.PI * r;
  const f = Math.min(1, Math.max(0, fraction));
  return (
    <div className="relative size-24 shrink-0 sm:size-36 xl:size-44" data-testid="hold-countdown" aria-live="off">
      <svg viewBox="0 0 120 120" className="size-full -rotate-90" aria-hidden="true">
        <circle cx="60" cy="60" r={r} fill="none" className="stroke-sunken" strokeWidth="10" />
        <circle
          cx="60"
          cy="60"
          r={r}
          fill="none"
          className={cn(state === 'captured' ? 'stroke-state-captured' : 'stroke-state-holding', 'transition-[stroke-dashoffset] duration-200 ease-linear')}
          strokeWidth="10"
          strokeLinecap="round"
          strokeDasharray={c}
          strokeDashoffset={c * (1 - f)}
        />
      </svg>
      <span className={cn('num absolute inset-0 flex items-center justify-center text-[2.25rem] leading-none sm:text-[3.25rem] xl:text-[4.25rem]', state === 'captured' ? 'text-state-captured' : state === 'holding' ? 'text-state-holding' : 'text-ink-faint')} data-testid="hold-seconds">
        {label}
      </span>
    </div>
  );
}
