import type { ReactNode } from 'react';
import { cn } from '../../lib/cn';
import { Badge } from './badge';

export interface EmptyStateProps {
  title: ReactNode;
  description?: ReactNode;
  action?: ReactNode;
  /** 'not-built' marks a page whose feature does not exist yet. */
  variant?: 'empty' | 'not-built';
  className?: string;
}

export function EmptyState({ title, description, action, variant = 'empty', className }: EmptyStateProps) {
  return (
    <div
      className={cn(
        'flex flex-col items-center justify-center gap-3 rounded-card border border-dashed border-line-strong bg-surface/60 px-6 py-14 text-center',
        className,
      )}
    >
      {variant === 'not-built' && <Badge tone="info">Not built yet</Badge>}
      <svg viewBox="0 0 40 40" className="size-10 text-ink-faint" aria-hidden="true">
        <circle cx="20" cy="20" r="15" fill="none" stroke="currentColor" strokeWidth="2" strokeDasharray="3 4" />
        <circle cx="20" cy="20" r="3" fill="currentColor" />
      </svg>
      <h2 className="text-base font-semibold text-ink">{title}</h2>
      {description && <div className="max-w-md text-sm text-ink-muted">{description}</div>}
      {action}
    </div>
  );
}
