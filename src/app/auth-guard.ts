import type { QueryClient } from '@tanstack/react-query';
import { data, redirect } from 'react-router';
import type { Me } from '../../shared/schemas/auth';
import { meQueryOptions } from '../features/auth/api/get-me';
import { isApiError } from '../lib/api-client';
import { canOpen, type Area } from '../lib/authorization';

/** Where to come back to after signing in: a same-site path only. */
export function safeNext(next: string | null): string {
  return next && next.startsWith('/') && !next.startsWith('//') && !next.startsWith('/login') ? next : '/';
}

/**
 * Loader step: the signed-in user, or a redirect to /login?next=… on 401. A user who must choose a
 * new password (after an invite or a reset) is sent to /password first; the server refuses their
 * other requests until then anyway.
 */
export async function requireMe(queryClient: QueryClient, request: Request, opts: { allowPasswordChange?: boolean } = {}): Promise<Me> {
  try {
    const me = await queryClient.ensureQueryData(meQueryOptions());
    if (me.mustChangePassword && !opts.allowPasswordChange) {
      const url = new URL(request.url);
      const next = url.pathname + url.search;
      throw redirect(next === '/' ? '/password' : `/password?next=${encodeURIComponent(next)}`);
    }
    return me;
  } catch (e) {
    if (isApiError(e) && e.status === 401) {
      const url = new URL(request.url);
      const next = url.pathname + url.search;
      throw redirect(next === '/' ? '/login' : `/login?next=${encodeURIComponent(next)}`);
    }
    throw e;
  }
}

/** Loader step: the signed-in user if their role may open `area`; otherwise a 403 for the ErrorBoundary. */
export async function requireArea(queryClient: QueryClient, request: Request, area: Area): Promise<Me> {
  const me = await requireMe(queryClient, request);
  if (!canOpen(me.role, area)) {
    throw data({ message: 'Your role does not give access to this page.' }, { status: 403, statusText: 'Forbidden' });
  }
  return me;
}
