import { QueryCache, QueryClient } from '@tanstack/react-query';
import { isApiError } from './api-client';

export interface QueryClientHooks {
  /**
   * Called when a query answers 401 (the session ended while in use); the app sends the user
   * to sign in. The session check (`meta: { [SESSION_CHECK]: true }`) triggers it only after it
   * once had a user; its first 401 is handled by the route guards. Mutations report their own
   * errors (a 401 there may be a wrong password, not an ended session).
   */
  onUnauthenticated?: () => void;
}

/** Meta key marking the session-check query. */
export const SESSION_CHECK = 'sessionCheck';

/** Retry only failures that may pass on a second try: network errors and 5xx, at most twice. */
export function shouldRetry(failureCount: number, error: unknown): boolean {
  if (isApiError(error) && error.status >= 400 && error.status < 500) return false;
  return failureCount < 2;
}

export function createQueryClient(hooks: QueryClientHooks = {}): QueryClient {
  return new QueryClient({
    queryCache: new QueryCache({
      onError: (error, query) => {
        // A first session check failing is the guards' business; one that had a user means the session ended.
        if (query.meta?.[SESSION_CHECK] && query.state.data === undefined) return;
        if (isApiError(error) && error.status === 401) hooks.onUnauthenticated?.();
      },
    }),
    defaultOptions: {
      queries: { staleTime: 30_000, retry: shouldRetry, refetchOnWindowFocus: true },
      mutations: { retry: false },
    },
  });
}
