import { QueryClientProvider, type QueryClient } from '@tanstack/react-query';
import { useState, type ReactNode } from 'react';
import { RouterProvider } from 'react-router';
import { Toaster } from '../components/ui/toast';
import { createQueryClient } from '../lib/query-client';
import { createAppRouter, type AppRouter } from './router';

export function AppProvider({ queryClient, children }: { queryClient: QueryClient; children: ReactNode }) {
  return (
    <QueryClientProvider client={queryClient}>
      {children}
      <Toaster />
    </QueryClientProvider>
  );
}

/** One query client and one router for the page; a 401 on any query sends the user to sign in. */
function createAppState(): { queryClient: QueryClient; router: AppRouter } {
  const holder: { router?: AppRouter } = {};
  const queryClient = createQueryClient({
    onUnauthenticated: () => {
      const router = holder.router;
      const loc = router?.state.location;
      // Only an idle page outside /login: a navigation in flight runs its own guard.
      if (!router || !loc || loc.pathname === '/login' || router.state.navigation.state !== 'idle') return;
      const next = encodeURIComponent(loc.pathname + loc.search);
      queueMicrotask(() => {
        queryClient.clear();
        void router.navigate(`/login?next=${next}`, { replace: true });
      });
    },
  });
  const router = createAppRouter(queryClient);
  holder.router = router;
  return { queryClient, router };
}

export function App() {
  const [{ queryClient, router }] = useState(createAppState);
  return (
    <AppProvider queryClient={queryClient}>
      <RouterProvider router={router} />
    </AppProvider>
  );
}
