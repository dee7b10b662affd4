import { create } from 'zustand';

export const THEMES = ['light', 'bench'] as const;
export type Theme = (typeof THEMES)[number];

/** localStorage key holding the chosen theme. */
export const THEME_STORAGE_KEY = 'stillpoint.theme';

function readStored(): Theme {
  try {
    const v = window.localStorage.getItem(THEME_STORAGE_KEY);
    return v === 'bench' ? 'bench' : 'light';
  } catch {
    return 'light';
  }
}

function apply(theme: Theme): void {
  document.documentElement.dataset.theme = theme;
}

/** Apply the stored theme to <html>; call once before the first render. */
export function applyStoredTheme(): Theme {
  const t = readStored();
  apply(t);
  return t;
}

interface ThemeState {
  theme: Theme;
  setTheme(theme: Theme): void;
  toggle(): void;
}

export const useThemeStore = create<ThemeState>((set, get) => ({
  theme: typeof window === 'undefined' ? 'light' : readStored(),
  setTheme(theme) {
    apply(theme);
    try {
      window.localStorage.setItem(THEME_STORAGE_KEY, theme);
    } catch {
      // Storage may be unavailable (private mode); the theme still applies for this page.
    }
    set({ theme });
  },
  toggle() {
    get().setTheme(get().theme === 'light' ? 'bench' : 'light');
  },
}));
