import { useEffect, useState } from 'react';
import type { RunPoint } from '../../../../shared/schemas/runs';
import { Badge } from '../../../components/ui/badge';
import { cn } from '../../../lib/cn';
import { formatFixed, formatNumber } from '../../../lib/format';
import { holdRemainingMs, useLiveRun } from '../../../stores/live-run';
import { approachWords, nominalWords } from '../lib/live-values';

export const STATE_LABEL: Record<RunPoint['state'], string> = {
  waiting: 'Waiting',
  approaching: 'Approaching',
  settling: 'Settling',
  holding: 'Holding',
  captured: 'Captured',
};

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

/**
 * The current point: its nominal, target and approach direction, its state, and the hold
 * countdown in numerals readable from two metres, with a ring that fills as the hold runs.
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

  return (
    <section aria-label="Current point" data-testid="current-point" data-index={point.index} data-state={point.state} className="flex flex-wrap items-center gap-6 rounded-card border border-line bg-surface p-5 shadow-card">
      <HoldRing fraction={fraction} state={point.state} label={holding ? String(Math.ceil(remainingMs / 1000)) : point.state === 'captured' ? '✓' : '—'} />
      <div className="min-w-0 flex-1">
        <p className="text-sm font-medium text-ink-muted">
          Point <span className="num text-ink">{point.index + 1}</span> of <span className="num">{total}</span>
        </p>
        <p className="mt-1 text-3xl font-semibold tracking-tight text-ink">
          <span className="num">{nominalWords(point)}</span>{' '}
          <span className="text-accent" aria-hidden="true">
            {arrow}
          </span>
        </p>
        <p className="mt-1 text-lg text-ink" data-testid="approach">
          Set <span className="num font-semibold">{formatFixed(point.targetDp, dpDecimals)}</span> {unitLabel}
          {targetFlow && (
            <>
              {' '}
              (<span className="num" data-testid="target-flow">{targetFlow}</span>)
            </>
          )}{' '}
          — <span className="font-semibold">{approachWords(point.approach)}</span>
        </p>
        <p className="num mt-1 text-sm text-ink-muted">
          window ±{formatNumber(point.window, dpDecimals + 1)} {unitLabel} · expect {formatNumber(point.expectedMa, 3)} mA
        </p>
      </div>
      <div className="flex flex-col items-end gap-2">
        <Badge tone={point.state} dot className="px-3 py-1 text-base">
          {paused ? 'Paused' : STATE_LABEL[point.state]}
        </Badge>
        {point.flags.length > 0 && (
          <div className="flex gap-1">
            {point.flags.map((f) => (
              <Badge key={f} tone={f}>
                {f}
              </Badge>
            ))}
          </div>
        )}
        <p className="text-sm text-ink-muted" data-testid="hold-caption">
          {holding ? (
            <>
              Hold: <span className="num text-ink">{Math.ceil(remainingMs / 1000)}</span> s of <span className="num">{Math.round(requiredMs / 1000)}</span> s left
            </>
          ) : point.state === 'settling' ? (
            'Waiting for both readings to settle'
          ) : point.state === 'approaching' ? (
            'Move towards the target'
          ) : (
            <>
              Hold <span className="num">{holdSeconds}</span> s once steady
            </>
          )}
        </p>
      </div>
    </section>
  );
}

function HoldRing({ fraction, state, label }: { fraction: number; state: RunPoint['state']; label: string }) {
  const r = 52;
  const c = 2 * Math.PI * r;
  const f = Math.min(1, Math.max(0, fraction));
  return (
    <div className="relative size-36 shrink-0 md:size-44" data-testid="hold-countdown" aria-live="off">
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
      <span className={cn('num absolute inset-0 flex items-center justify-center text-[3.25rem] leading-none md:text-[4.25rem]', state === 'captured' ? 'text-state-captured' : state === 'holding' ? 'text-state-holding' : 'text-ink-faint')} data-testid="hold-seconds">
        {label}
      </span>
    </div>
  );
}
