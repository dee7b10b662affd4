import type { Config } from 'tailwindcss';

/**
 * Stillpoint theme tokens. Colours are CSS variables defined in src/index.css for the light
 * theme and the dark "bench" theme (switched by `data-theme` on <html>), so every utility
 * follows the theme without `dark:` variants. The palette is our own.
 */
const v = (name: string) => `var(--sp-${name})`;

export default {
  content: ['./index.html', './src/**/*.{ts,tsx}'],
  theme: {
    extend: {
      fontFamily: {
        sans: ['Inter', 'ui-sans-serif', 'system-ui', 'sans-serif'],
        mono: ['"JetBrains Mono"', 'ui-monospace', 'SFMono-Regular', 'monospace'],
      },
      colors: {
        canvas: v('canvas'),
        surface: v('surface'),
        sunken: v('sunken'),
        ink: { DEFAULT: v('ink'), muted: v('ink-muted'), faint: v('ink-faint') },
        line: { DEFAULT: v('line'), strong: v('line-strong') },
        accent: { DEFAULT: v('accent'), hover: v('accent-hover'), ink: v('accent-ink'), soft: v('accent-soft') },
        focus: v('focus'),
        ok: { DEFAULT: v('ok'), soft: v('ok-soft') },
        warn: { DEFAULT: v('warn'), soft: v('warn-soft') },
        danger: { DEFAULT: v('danger'), soft: v('danger-soft') },
        info: { DEFAULT: v('info'), soft: v('info-soft') },
        /** Point states of a run (DESIGN.md §3.5). */
        state: {
          waiting: v('state-waiting'),
          approaching: v('state-approaching'),
          settling: v('state-settling'),
          holding: v('state-holding'),
          captured: v('state-captured'),
        },
        /** Point flags of a run. */
        flag: {
          leak: v('flag-leak'),
          overshoot: v('flag-overshoot'),
          unstable: v('flag-unstable'),
          manual: v('flag-manual'),
        },
      },
      fontSize: {
        /** Live readout numerals; larger in the bench theme (readable at two metres). */
        readout: [v('readout-size'), { lineHeight: '1', fontWeight: '600' }],
        /** Summary counts; larger in the bench theme. */
        stat: [v('stat-size'), { lineHeight: '1.15', fontWeight: '600' }],
      },
      borderRadius: { card: '0.625rem' },
      boxShadow: { card: v('shadow-card') },
    },
  },
} satisfies Config;
