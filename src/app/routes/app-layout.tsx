import type { QueryClient } from '@tanstack/react-query';
import { Outlet, useLoaderData, useNavigate, type LoaderFunctionArgs } from 'react-router';
import { AppShell } from '../../components/layout/app-shell';
import { Logo } from '../../components/layout/logo';
import { toast } from '../../components/ui/toast';
import { useMe } from '../../features/auth/api/get-me';
import { useLogout } from '../../features/auth/api/logout';
import { requireMe } from '../auth-guard';
import { RouteErrorBoundary } from './route-error';

/** Auth guard for everything inside the shell. */
export const createLoader =
  (queryClient: QueryClient) =>
  ({ request }: LoaderFunctionArgs) =>
    requireMe(queryClient, request);

export function Component() {
  const loaderMe = useLoaderData<Awaited<ReturnType<ReturnType<typeof createLoader>>>>();
  const me = useMe().data ?? loaderMe;
  const navigate = useNavigate();
  const logout = useLogout({
    onDone: () => {
      toast('Signed out');
      void navigate('/login', { replace: true });
    },
  });
  return (
    <AppShell me={me} onSignOut={() => logout.mutate()} signingOut={logout.isPending}>
      <Outlet />
    </AppShell>
  );
}

/** Shown while the first loader (session check) runs. */
export function HydrateFallback() {
  return (
    <div className="flex min-h-dvh items-center justify-center text-accent" aria-busy="true" aria-label="Loading Stillpoint">
      <Logo className="size-10 animate-pulse" />
    </div>
  );
}

export const ErrorBoundary = RouteErrorBoundary;
