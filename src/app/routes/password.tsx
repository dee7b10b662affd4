import type { QueryClient } from '@tanstack/react-query';
import { Link, useLoaderData, useNavigate, useSearchParams, type LoaderFunctionArgs } from 'react-router';
import { Logo } from '../../components/layout/logo';
import { ThemeToggle } from '../../components/layout/theme-toggle';
import { toast } from '../../components/ui/toast';
import { ChangePasswordForm } from '../../features/auth/components/change-password-form';
import { requireMe, safeNext } from '../auth-guard';
import { RouteErrorBoundary } from './route-error';

/** Signed in only; the one page a user who must choose a new password may open. */
export const createLoader =
  (queryClient: QueryClient) =>
  ({ request }: LoaderFunctionArgs) =>
    requireMe(queryClient, request, { allowPasswordChange: true });

export function Component() {
  const me = useLoaderData<Awaited<ReturnType<ReturnType<typeof createLoader>>>>();
  const navigate = useNavigate();
  const [params] = useSearchParams();
  const required = !!me.mustChangePassword;
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
              <h1 className="text-2xl font-semibold tracking-tight text-ink">{required ? 'Choose your password' : 'Change your password'}</h1>
              <p className="mt-1 text-sm text-ink-muted">
                {required ? `${me.name}, the password you were given works once: choose your own to go on.` : 'Your other signed-in sessions end when you save.'}
              </p>
            </div>
          </div>
          <div className="rounded-card border border-line bg-surface p-6 shadow-card">
            <ChangePasswordForm
              required={required}
              onChanged={() => {
                toast('Password changed', { tone: 'success', description: 'Other sessions have been signed out.' });
                void navigate(safeNext(params.get('next')), { replace: true });
              }}
            />
          </div>
          {!required && (
            <p className="mt-6 text-center text-sm">
              <Link to="/" className="text-accent underline-offset-2 hover:underline">
                Back to Stillpoint
              </Link>
            </p>
          )}
        </div>
      </main>
    </div>
  );
}

export const ErrorBoundary = RouteErrorBoundary;
