import { useEffect, useRef, useState, type ReactNode } from 'react';
import { Link, useLocation } from 'react-router';
import type { Me } from '../../../shared/schemas/auth';
import { ROLE_LABELS } from '../../lib/authorization';
import { cn } from '../../lib/cn';
import { Button } from '../ui/button';
import { AppNav } from './app-nav';
import { Logo } from './logo';
import { ThemeToggle } from './theme-toggle';

export interface AppShellProps {
  me: Me;
  onSignOut: () => void;
  signingOut?: boolean;
  children: ReactNode;
}

/** id of the navigation panel the phone menu button controls. */
export const MAIN_NAV_ID = 'main-nav';

/**
 * Header (product, site, user, theme, sign out), role-aware navigation and the page.
 * From 1024 px the navigation is a sidebar; below, it folds into a menu opened by a button
 * (aria-expanded; focus moves to the first link; Escape, a choice or a click outside closes it and
 * focus returns to the button).
 */
export function AppShell({ me, onSignOut, signingOut = false, children }: AppShellProps) {
  const [menuOpen, setMenuOpen] = useState(false);
  const menuButton = useRef<HTMLButtonElement>(null);
  const panel = useRef<HTMLDivElement>(null);
  const { pathname } = useLocation();

  // A choice of page closes the menu.
  useEffect(() => setMenuOpen(false), [pathname]);

  useEffect(() => {
    if (!menuOpen) return;
    panel.current?.querySelector<HTMLElement>('a[href]')?.focus();
    const onKey = (e: KeyboardEvent) => {
      if (e.key !== 'Escape') return;
      e.preventDefault();
      setMenuOpen(false);
      menuButton.current?.focus();
    };
    const onPointer = (e: PointerEvent) => {
      const t = e.target as Node;
      if (!panel.current?.contains(t) && !menuButton.current?.contains(t)) setMenuOpen(false);
    };
    document.addEventListener('keydown', onKey);
    document.addEventListener('pointerdown', onPointer);
    return () => {
      document.removeEventListener('keydown', onKey);
      document.removeEventListener('pointerdown', onPointer);
    };
  }, [menuOpen]);

  return (
    <div className="flex min-h-dvh flex-col">
      <a
        href="#main"
        className="sr-only focus:not-sr-only focus:fixed focus:top-2 focus:left-2 focus:z-50 focus:rounded-md focus:bg-surface focus:px-3 focus:py-2 focus:shadow"
      >
        Skip to content
      </a>
      <header className="sticky top-0 z-30 border-b border-line bg-surface/95 backdrop-blur">
        <div className="flex h-14 items-center gap-2 px-3 sm:gap-4 md:px-6">
          <button
            ref={menuButton}
            type="button"
            aria-expanded={menuOpen}
            aria-controls={MAIN_NAV_ID}
            onClick={() => setMenuOpen((o) => !o)}
            data-testid="menu-button"
            className="inline-flex h-9 items-center gap-1.5 rounded-md border border-line-strong bg-surface px-2.5 text-sm font-medium text-ink hover:bg-sunken focus-visible:outline-2 focus-visible:outline-offset-2 focus-visible:outline-focus lg:hidden"
          >
            <svg viewBox="0 0 20 20" className="size-4" aria-hidden="true">
              {menuOpen ? (
                <path d="M5 5l10 10M15 5L5 15" stroke="currentColor" strokeWidth="1.75" strokeLinecap="round" />
              ) : (
                <path d="M3 5.5h14M3 10h14M3 14.5h14" stroke="currentColor" strokeWidth="1.75" strokeLinecap="round" />
              )}
            </svg>
            Menu
          </button>
          <div className="flex min-w-0 items-center gap-2 text-accent">
            <Logo className="size-7 shrink-0" />
            <span className="text-lg font-semibold tracking-tight text-ink">Stillpoint</span>
          </div>
          <span aria-hidden="true" className="hidden h-5 w-px bg-line-strong md:block" />
          <span className="hidden min-w-0 truncate text-sm text-ink-muted md:block" data-testid="site-name">
            {me.siteName}
          </span>
          <div className="ml-auto flex items-center gap-3">
            <div className="hidden text-right leading-tight lg:block" data-testid="current-user">
              <div className="text-sm font-medium text-ink">{me.name}</div>
              <div className="text-xs text-ink-muted" data-testid="current-role">
                {ROLE_LABELS[me.role]}
              </div>
            </div>
            <ThemeToggle compact />
            <Link to="/password" className="hidden text-sm text-ink-muted underline-offset-2 hover:text-ink hover:underline sm:block" data-testid="change-password">
              Password
            </Link>
            <Button variant="secondary" size="sm" className="h-9 max-sm:hidden" onClick={onSignOut} loading={signingOut} data-testid="sign-out">
              Sign out
            </Button>
          </div>
        </div>
      </header>
      <div className="flex flex-1 flex-col lg:flex-row">
        {/* A choice in the menu closes it (the current page's link included). */}
        {/* eslint-disable-next-line jsx-a11y/click-events-have-key-events, jsx-a11y/no-static-element-interactions -- the links inside handle the keyboard; this only hears their clicks */}
        <div
          ref={panel}
          id={MAIN_NAV_ID}
          onClick={(e) => {
            if ((e.target as HTMLElement).closest('a')) setMenuOpen(false);
          }}
          className={cn(
            'border-b border-line bg-surface px-3 py-3 shadow-card lg:block lg:w-52 lg:shrink-0 lg:border-r lg:border-b-0 lg:bg-surface/60 lg:py-5 lg:shadow-none',
            menuOpen ? 'block' : 'hidden',
          )}
        >
          <AppNav role={me.role} />
          {/* What the header has no room for on a phone. */}
          <div className="mt-3 flex flex-col gap-2 border-t border-line pt-3 sm:hidden">
            <p className="px-3 text-sm leading-tight">
              <span className="font-medium text-ink">{me.name}</span> <span className="text-ink-muted">· {ROLE_LABELS[me.role]}</span>
            </p>
            <p className="px-3 text-sm text-ink-muted">{me.siteName}</p>
            <div className="flex items-center gap-2 px-3">
              <Link to="/password" className="text-sm text-accent underline-offset-2 hover:underline">
                Password
              </Link>
              <Button variant="secondary" size="sm" className="ml-auto h-9" onClick={onSignOut} loading={signingOut}>
                Sign out
              </Button>
            </div>
          </div>
        </div>
        <main id="main" tabIndex={-1} className="min-w-0 flex-1 px-4 py-6 md:px-8 md:py-8 focus:outline-none">
          <div className="mx-auto max-w-6xl">{children}</div>
        </main>
      </div>
    </div>
  );
}
