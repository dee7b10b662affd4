import type { RunPoint } from '../../../../shared/schemas/runs';
import { cn } from '../../../lib/cn';

export type MarkState = RunPoint['state'] | 'paused';

/**
 * A small shape per point state, so states differ by shape as well as colour and words:
 * waiting an open ring, approaching an arrow, settling a wave, holding a ring with a centre,
 * captured a tick, paused two bars.
 */
export function StateMark({ state, className }: { state: MarkState; className?: string }) {
  const common = { fill: 'none', stroke: 'currentColor', strokeWidth: 1.8, strokeLinecap: 'round', strokeLinejoin: 'round' } as const;
  return (
    <svg viewBox="0 0 12 12" className={cn('size-3 shrink-0', className)} aria-hidden="true" data-mark={state}>
      {state === 'waiting' && <circle cx="6" cy="6" r="4" {...common} />}
      {state === 'approaching' && <path d="M2 6h7M6.5 3l3 3-3 3" {...common} />}
      {state === 'settling' && <path d="M1.5 6.5c1.2-2.4 2.3-2.4 3 0s1.8 2.4 3 0 2.3-2.4 3 0" {...common} />}
      {state === 'holding' && (
        <>
          <circle cx="6" cy="6" r="4.2" {...common} />
          <circle cx="6" cy="6" r="1.7" fill="currentColor" />
        </>
      )}
      {state === 'captured' && <path d="M2 6.5l2.6 2.6L10 3.5" {...common} />}
      {state === 'paused' && <path d="M4 2.5v7M8 2.5v7" {...common} strokeWidth={2.2} />}
    </svg>
  );
}
