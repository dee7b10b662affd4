import type { ReactNode } from 'react';
import { cn } from '../../lib/cn';

export type BadgeTone =
  | 'neutral'
  | 'accent'
  | 'ok'
  | 'warn'
  | 'danger'
  | 'info'
  | 'waiting'
  | 'approaching'
  | 'settling'
  | 'holding'
  | 'captured'
  | 'leak'
  | 'overshoot'
  | 'unstable'
  | 'manual';

const tones: Record<BadgeTone, string> = {
  neutral: 'bg-sunken text-ink-muted border-line',
  accent: 'bg-accent-soft text-accent border-transparent',
  ok: 'bg-ok-soft text-ok border-transparent',
  warn: 'bg-warn-soft text-warn border-transparent',
  danger: 'bg-danger-soft text-danger border-transparent',
  info: 'bg-info-soft text-info border-transparent',
  waiting: 'text-state-waiting border-state-waiting',
  approaching: 'text-state-approaching border-state-approaching',
  settling: 'text-state-settling border-state-settling',
  holding: 'text-state-holding border-state-holding',
  captured: 'text-state-captured border-state-captured',
  leak: 'text-flag-leak border-flag-leak',
  overshoot: 'text-flag-overshoot border-flag-overshoot',
  unstable: 'text-flag-unstable border-flag-unstable',
  manual: 'text-flag-manual border-flag-manual',
};

export interface BadgeProps {
  tone?: BadgeTone;
  /** Small leading dot in the badge's colour. */
  dot?: boolean;
  children: ReactNode;
  className?: string;
}

/** A short status label. Colour is never the only signal: the text always names the state. */
export function Badge({ tone = 'neutral', dot = false, children, className }: BadgeProps) {
  return (
    <span
      className={cn(
        'inline-flex items-center gap-1.5 whitespace-nowrap rounded-full border px-2 py-0.5 text-xs font-medium',
        tones[tone],
        className,
      )}
    >
      {dot && <span aria-hidden="true" className="size-1.5 rounded-full bg-current" />}
      {children}
    </span>
  );
}
