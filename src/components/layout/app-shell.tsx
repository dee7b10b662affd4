import type { ReactNode } from 'react';
import { Link } from 'react-router';
import type { Me } from '../../../shared/schemas/auth';
import { ROLE_LABELS } from '../../lib/authorization';
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

/** Header (product, site, user, theme, sign out), role-aware navigation and the page. */
export function AppShell({ me, onSignOut, signingOut = false, children }: AppShellProps) {
  return (
    <div className="flex min-h-dvh flex-col">
      <a
        href="#main"
        className="sr-only focus:not-sr-only focus:fixed focus:top-2 focus:left-2 focus:z-50 focus:rounded-md focus:bg-surface focus:px-3 focus:py-2 focus:shadow"
      >
        Skip to content
      </a>
      <header className="sticky top-0 z-30 border-b border-line bg-surface/95 backdrop-blur">
        <div className="flex h-14 items-center gap-4 px-4 md:px-6">
          <div className="flex items-center gap-2 text-accent">
            <Logo className="size-7" />
            <span className="text-lg font-semibold tracking-tight text-ink">Stillpoint</span>
          </div>
          <span aria-hidden="true" className="hidden h-5 w-px bg-line-strong sm:block" />
          <span className="hidden truncate text-sm text-ink-muted sm:block" data-testid="site-name">
            {me.siteName}
          </span>
          <div className="ml-auto flex items-center gap-3">
            <div className="hidden text-right leading-tight md:block" data-testid="current-user">
              <div className="text-sm font-medium text-ink">{me.name}</div>
              <div className="text-xs text-ink-muted" data-testid="current-role">
                {ROLE_LABELS[me.role]}
              </div>
            </div>
            <ThemeToggle />
            <Link to="/password" className="hidden text-sm text-ink-muted underline-offset-2 hover:text-ink hover:underline sm:block" data-testid="change-password">
              Password
            </Link>
            <Button variant="secondary" size="sm" className="h-9" onClick={onSignOut} loading={signingOut} data-testid="sign-out">
              Sign out
            </Button>
          </div>
        </div>
      </header>
      <div className="flex flex-1 flex-col md:flex-row">
        <aside className="border-b border-line bg-surface/60 px-3 py-2 md:w-52 md:shrink-0 md:border-r md:border-b-0 md:px-3 md:py-5">
          <AppNav role={me.role} className="overflow-x-auto" />
        </aside>
        <main id="main" tabIndex={-1} className="min-w-0 flex-1 px-4 py-6 md:px-8 md:py-8 focus:outline-none">
          <div className="mx-auto max-w-6xl">{children}</div>
        </main>
      </div>
    </div>
  );
}
