import type { ReactNode } from 'react';
import { Button } from './button';

export interface ErrorNoticeProps {
  title?: ReactNode;
  /** The error to describe; its message is shown. */
  error: unknown;
  onRetry?: () => void;
}

/** Inline notice for a failed load, with an optional retry. */
export function ErrorNotice({ title = 'Could not load this', error, onRetry }: ErrorNoticeProps) {
  const message = error instanceof Error ? error.message : 'Something went wrong.';
  return (
    <div role="alert" className="flex flex-wrap items-center justify-between gap-3 rounded-card border border-danger/40 bg-danger-soft px-4 py-3 text-sm">
      <div>
        <p className="font-semibold text-danger">{title}</p>
        <p className="mt-0.5 text-ink">{message}</p>
      </div>
      {onRetry && (
        <Button variant="secondary" size="sm" onClick={onRetry}>
          Try again
        </Button>
      )}
    </div>
  );
}
