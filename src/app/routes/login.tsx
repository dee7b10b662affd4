import type { QueryClient } from '@tanstack/react-query';
import { redirect, useNavigate, useSearchParams, type LoaderFunctionArgs } from 'react-router';
import { AuthPage } from '../../components/layout/auth-page';
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
    <AuthPage
      title="Sign in to Stillpoint"
      subtitle="Calibration capture, results and sign-off"
      footer={<p className="mt-6 text-center text-xs text-ink-faint">Ask your site admin for an account or a new password.</p>}
    >
      <SignInForm onSignedIn={() => navigate(safeNext(params.get('next')), { replace: true })} />
    </AuthPage>
  );
}

export const ErrorBoundary = RouteErrorBoundary;
