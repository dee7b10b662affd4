import { cn } from '../../lib/cn';

/** A labelled count for page summaries; `null` while it is not known yet. */
export function Stat({ label, value, tone }: { label: string; value: number | null; tone?: 'danger' | 'warn' | 'ok' | undefined }) {
  return (
    <div className="rounded-card border border-line bg-surface px-4 py-3 shadow-card">
      <dt className="text-xs font-medium text-ink-muted">{label}</dt>
      <dd
        className={cn(
          'num mt-1 text-stat',
          tone === 'danger' ? 'text-danger' : tone === 'warn' ? 'text-warn' : tone === 'ok' ? 'text-ok' : 'text-ink',
        )}
      >
        {value ?? '…'}
      </dd>
    </div>
  );
}
