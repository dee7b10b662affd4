import { cn } from '../../../lib/cn';
import { formatNumber } from '../../../lib/format';
import type { BannerItem, BannerKind } from '../lib/banners';

export type { BannerItem, BannerKind } from '../lib/banners';

const STYLE: Record<BannerKind, { title: string; className: string }> = {
  leak: { title: 'Leak', className: 'border-flag-leak bg-flag-leak/12 text-flag-leak' },
  overshoot: { title: 'Overshoot', className: 'border-flag-overshoot bg-flag-overshoot/12 text-flag-overshoot' },
  unstable: { title: 'Unstable', className: 'border-flag-unstable bg-flag-unstable/12 text-flag-unstable' },
  disconnect: { title: 'Device disconnected', className: 'border-danger bg-danger-soft text-danger' },
  ne43: { title: 'Signal outside NE 43 measurement range', className: 'border-danger bg-danger-soft text-danger' },
  clock: { title: 'Sender clock not plausible', className: 'border-warn bg-warn-soft text-warn' },
  unit: { title: 'Unit mismatch', className: 'border-danger bg-danger-soft text-danger' },
  stream: { title: 'Live data interrupted', className: 'border-warn bg-warn-soft text-warn' },
  overrange: { title: 'Over range', className: 'border-danger bg-danger-soft text-danger' },
};

/** Warnings that cannot be missed: full width, large, coloured by kind and always named in words. */
export function WarningBanner({ items, onDismiss }: { items: readonly BannerItem[]; onDismiss?: (kind: BannerKind) => void }) {
  if (items.length === 0) return null;
  return (
    <div className="flex flex-col gap-2" data-testid="warnings">
      {items.map((w) => {
        const st = STYLE[w.kind];
        return (
          <div key={w.kind} role="alert" data-testid={`warning-${w.kind}`} className={cn('flex items-start gap-3 rounded-card border-2 px-4 py-3', st.className)}>
            <WarnIcon />
            <div className="min-w-0 flex-1">
              <p className="text-lg font-semibold">
                {st.title}
                {w.kind === 'leak' && w.rate !== null && w.rate !== undefined && (
                  <>
                    {' '}
                    — <span className="num" data-testid="leak-rate">{formatNumber(Math.abs(w.rate), 3)}</span> % of span per minute
                  </>
                )}
              </p>
              <p className="mt-0.5 text-ink">{w.message}</p>
              {w.action && <p className="mt-1 font-medium text-ink">{w.action}</p>}
            </div>
            {onDismiss && (w.kind === 'unstable' || w.kind === 'overshoot') && (
              <button type="button" className="rounded px-2 py-1 text-sm text-ink-muted hover:text-ink" onClick={() => onDismiss(w.kind)}>
                Hide
              </button>
            )}
          </div>
        );
      })}
    </div>
  );
}

function WarnIcon() {
  return (
    <svg viewBox="0 0 24 24" className="mt-0.5 size-7 shrink-0" aria-hidden="true">
      <path d="M12 3l10 18H2z" fill="none" stroke="currentColor" strokeWidth="2" strokeLinejoin="round" />
      <path d="M12 10v5" stroke="currentColor" strokeWidth="2" strokeLinecap="round" />
      <circle cx="12" cy="18" r="1.2" fill="currentColor" />
    </svg>
  );
}
