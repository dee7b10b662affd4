import type { ReactNode } from 'react';
import { Logo } from './logo';
import { ThemeToggle } from './theme-toggle';

/** The frame of the pages outside the app shell (sign-in, password change): logo, title, one card. */
export function AuthPage({ title, subtitle, footer, children }: { title: ReactNode; subtitle: ReactNode; footer?: ReactNode; children: ReactNode }) {
  return (
    <div className="flex min-h-dvh flex-col">
      <div className="flex justify-end p-4">
        <ThemeToggle />
      </div>
      <main className="flex flex-1 items-start justify-center px-4 pt-[8vh] pb-16">
        <div className="w-full max-w-sm">
          <div className="mb-8 flex flex-col items-center gap-3 text-center">
            <Logo className="size-12 text-accent" />
            <div>
              <h1 className="text-2xl font-semibold tracking-tight text-ink">{title}</h1>
              <p className="mt-1 text-sm text-ink-muted">{subtitle}</p>
            </div>
          </div>
          <div className="rounded-card border border-line bg-surface p-6 shadow-card">{children}</div>
          {footer}
        </div>
      </main>
    </div>
  );
}
