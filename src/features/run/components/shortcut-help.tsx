import { cn } from '../../../lib/cn';
import type { Shortcut } from '../hooks/use-shortcuts';

/**
 * The single-key shortcuts and their switch (WCAG 2.1.4 Character Key Shortcuts: a way to turn
 * them off). The keys are listed only while they are on.
 */
export function ShortcutHelp({ shortcuts, on, onChange }: { shortcuts: readonly Shortcut[]; on: boolean; onChange: (on: boolean) => void }) {
  return (
    <section aria-labelledby="shortcuts-title" className="rounded-card border border-line bg-surface px-4 py-3 text-sm shadow-card" data-testid="shortcuts" data-on={String(on)}>
      <div className="flex flex-wrap items-center justify-between gap-2">
        <h2 id="shortcuts-title" className="text-xs font-semibold tracking-wide text-ink-muted">
          Keyboard shortcuts
        </h2>
        <label className="inline-flex cursor-pointer items-center gap-2 text-sm text-ink">
          <input type="checkbox" role="switch" checked={on} onChange={(e) => onChange(e.target.checked)} className="size-4 accent-[var(--sp-accent)]" data-testid="shortcuts-switch" />
          Single-key shortcuts
        </label>
      </div>
      {on ? (
        <ul className="mt-2 grid grid-cols-2 gap-x-4 gap-y-1.5">
          {shortcuts.map((s) => (
            // Not available now: dashed key and fainter words (still readable, 4.5:1), never faded out.
            <li key={s.key} className="flex items-center gap-2" data-available={String(s.enabled !== false)}>
              <kbd className={cn('num inline-flex min-w-6 justify-center rounded border bg-sunken px-1.5 py-0.5 text-xs', s.enabled === false ? 'border-dashed border-line-strong text-ink-faint' : 'border-line-strong text-ink')}>{s.cap}</kbd>
              <span className={s.enabled === false ? 'text-ink-faint' : 'text-ink-muted'}>{s.label}</span>
            </li>
          ))}
        </ul>
      ) : (
        <p className="mt-1 text-ink-muted">Off: keys do nothing here. Use the buttons.</p>
      )}
    </section>
  );
}
