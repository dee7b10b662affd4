import { cn } from '../../lib/cn';
import { useThemeStore } from '../../lib/theme';

/**
 * Switches between the light theme and the dark bench theme; the choice is remembered. The label
 * names the theme the button selects ("Use bench theme" while light, "Use light theme" while on
 * the bench theme), so it reads the same to the eye and to a screen reader.
 */
export function ThemeToggle({ className, compact = false }: { className?: string; compact?: boolean }) {
  const theme = useThemeStore((s) => s.theme);
  const toggle = useThemeStore((s) => s.toggle);
  const bench = theme === 'bench';
  const label = bench ? 'Use light theme' : 'Use bench theme';
  return (
    <button
      type="button"
      onClick={toggle}
      data-testid="theme-toggle"
      data-theme-selects={bench ? 'light' : 'bench'}
      title={bench ? 'Switch to the light theme' : 'Switch to the bench theme (dark, larger numerals)'}
      className={cn(
        'inline-flex h-9 shrink-0 items-center gap-2 rounded-md border border-line-strong bg-surface px-2.5 text-sm text-ink hover:bg-sunken',
        'focus-visible:outline-2 focus-visible:outline-offset-2 focus-visible:outline-focus',
        className,
      )}
    >
      {/* The icon shows the theme the button selects. */}
      <svg viewBox="0 0 20 20" className="size-4" aria-hidden="true">
        {bench ? (
          <>
            <circle cx="10" cy="10" r="3.5" fill="currentColor" />
            <path
              d="M10 1.5v2M10 16.5v2M1.5 10h2M16.5 10h2M4 4l1.4 1.4M14.6 14.6L16 16M4 16l1.4-1.4M14.6 5.4L16 4"
              stroke="currentColor"
              strokeWidth="1.5"
              strokeLinecap="round"
            />
          </>
        ) : (
          <path d="M15.5 12.5A6.5 6.5 0 0 1 7.5 4.5a6.5 6.5 0 1 0 8 8z" fill="currentColor" />
        )}
      </svg>
      <span className={cn(compact && 'sr-only sm:not-sr-only')}>{label}</span>
    </button>
  );
}
