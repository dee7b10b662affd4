import { queryOptions, useQueries, useQuery } from '@tanstack/react-query';
import { RunSchema, type Run } from '../../../../shared/schemas/runs';
import { api } from '../../../lib/api-client';
import { queryKeys } from '../../../lib/query-keys';

/** GET /api/runs/:id → plan, point states, captured values and results. */
export function getRun(id: string, signal?: AbortSignal): Promise<Run> {
  return api.get(`/api/runs/${encodeURIComponent(id)}`, { schema: RunSchema, ...(signal ? { signal } : {}) });
}

export function runQueryOptions(id: string) {
  // Stream events patch and invalidate this; the slow poll only covers a stream that is down.
  return queryOptions({ queryKey: queryKeys.run(id), queryFn: ({ signal }) => getRun(id, signal), staleTime: 2_000, refetchInterval: 15_000 });
}

export function useRun(id: string) {
  return useQuery(runQueryOptions(id));
}

/** Several runs at once (the job page shows every run of the job). */
export function useRuns(ids: readonly string[]): Run[] {
  const results = useQueries({ queries: ids.map((id) => ({ ...runQueryOptions(id), refetchInterval: false as const })) });
  return results.flatMap((r) => (r.data ? [r.data] : []));
}
