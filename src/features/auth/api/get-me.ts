import { queryOptions, useQuery } from '@tanstack/react-query';
import { MeSchema, type Me } from '../../../../shared/schemas/auth';
import { api } from '../../../lib/api-client';
import { setSiteTimeZone } from '../../../lib/format';
import { SESSION_CHECK } from '../../../lib/query-client';
import { queryKeys } from '../../../lib/query-keys';

export const meQueryKey = queryKeys.me;

/** GET /api/auth/me → the signed-in user, or ApiError 401. */
export async function getMe(signal?: AbortSignal): Promise<Me> {
  const me = await api.get('/api/auth/me', { schema: MeSchema, ...(signal ? { signal } : {}) });
  // Dates on every page are shown, and "today" is taken, in the site's zone.
  setSiteTimeZone(me.timeZone);
  return me;
}

export function meQueryOptions() {
  return queryOptions({
    queryKey: meQueryKey,
    queryFn: ({ signal }) => getMe(signal),
    staleTime: 5 * 60_000,
    retry: false,
    // The route guards redirect on this query's 401 themselves.
    meta: { [SESSION_CHECK]: true },
  });
}

export function useMe() {
  return useQuery(meQueryOptions());
}
