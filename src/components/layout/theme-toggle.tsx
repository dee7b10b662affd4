import { cn } from '../../lib/cn';
import { useThemeStore } from '../../lib/theme';

/** Switches between the light theme and the dark bench theme; the choice is remembered. */
export function ThemeToggle({ className }: { className?: string }) {
  const theme = useThemeStore((s) => s.theme);
  const toggle = useThemeStore((s) => s.toggle);
  const bench = theme === 'bench';
  return (
    <button
      type="button"
      onClick={toggle}
      aria-pressed={bench}
      title={bench ? 'Switch to the light theme' : 'Switch to the bench theme (dark, large numerals)'}
      className={cn(
        'inline-flex h-9 items-center gap-2 rounded-md border border-line-strong bg-surface px-3 text-sm text-ink hover:bg-sunken',
        'focus-visible:outline-2 focus-visible:outline-offset-2 focus-visible:outline-focus',
        className,
      )}
    >
      <svg viewBox="0 0 20 20" className="size-4" aria-hidden="true">
        {bench ? (
          <path d="M15.5 12.5A6.5 6.5 0 0 1 7.5 4.5a6.5 6.5 0 1 0 8 8z" fill="currentColor" />
        ) : (
          <>
            <circle cx="10" cy="10" r="3.5" fill="currentColor" />
            <path
              d="M10 1.5v2M10 16.5v2M1.5 10h2M16.5 10h2M4 4l1.4 1.4M14.6 14.6L16 16M4 16l1.4-1.4M14.6 5.4L16 4"
              stroke="currentColor"
              strokeWidth="1.5"
              strokeLinecap="round"
            />
          </>
        )}
      </svg>
      Bench theme
    </button>
  );
}
