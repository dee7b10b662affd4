import type { QueryClient } from '@tanstack/react-query';
import { Link, useLoaderData, useNavigate, useSearchParams, type LoaderFunctionArgs } from 'react-router';
import { AuthPage } from '../../components/layout/auth-page';
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
    <AuthPage
      title={required ? 'Choose your password' : 'Change your password'}
      subtitle={required ? `${me.name}, the password you were given works once: choose your own to go on.` : 'Your other signed-in sessions end when you save.'}
      footer={
        !required && (
          <p className="mt-6 text-center text-sm">
            <Link to="/" className="text-accent underline-offset-2 hover:underline">
              Back to Stillpoint
            </Link>
          </p>
        )
      }
    >
      <ChangePasswordForm
        required={required}
        onChanged={() => {
          toast('Password changed', { tone: 'success', description: 'Other sessions have been signed out.' });
          void navigate(safeNext(params.get('next')), { replace: true });
        }}
      />
    </AuthPage>
  );
}

export const ErrorBoundary = RouteErrorBoundary;
