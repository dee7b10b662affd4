import type { QueryClient } from '@tanstack/react-query';
import { redirect, useNavigate, useSearchParams, type LoaderFunctionArgs } from 'react-router';
import { Logo } from '../../components/layout/logo';
import { ThemeToggle } from '../../components/layout/theme-toggle';
import { meQueryOptions } from '../../features/auth/api/get-me';
import { SignInForm } from '../../features/auth/components/sign-in-form';
import { isApiError } from '../../lib/api-client';
import { safeNext } from '../auth-guard';
import { RouteErrorBoundary } from './route-error';

/** Already signed in? Go straight on. Otherwise show the form (a 401 here is expected). */
export const createLoader =
  (queryClient: QueryClient) =>
  async ({ request }: LoaderFunctionArgs) => {
    try {
      await queryClient.ensureQueryData(meQueryOptions());
    } catch (e) {
      if (isApiError(e)) return null;
      throw e;
    }
    throw redirect(safeNext(new URL(request.url).searchParams.get('next')));
  };

export function Component() {
  const navigate = useNavigate();
  const [params] = useSearchParams();
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
              <h1 className="text-2xl font-semibold tracking-tight text-ink">Sign in to Stillpoint</h1>
              <p className="mt-1 text-sm text-ink-muted">Calibration capture, results and sign-off</p>
            </div>
          </div>
          <div className="rounded-card border border-line bg-surface p-6 shadow-card">
            <SignInForm onSignedIn={() => navigate(safeNext(params.get('next')), { replace: true })} />
          </div>
          <p className="mt-6 text-center text-xs text-ink-faint">Ask your site admin for an account or a new password.</p>
        </div>
      </main>
    </div>
  );
}

export const ErrorBoundary = RouteErrorBoundary;
