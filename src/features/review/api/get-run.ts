import { queryOptions, useQueries } from '@tanstack/react-query';
import { RunSchema, type Run } from '../../../../shared/schemas/runs';
import { api } from '../../../lib/api-client';
import { queryKeys } from '../../../lib/query-keys';

/** GET /api/runs/:id → plan, point states, captures and results. */
export function getRun(id: string, signal?: AbortSignal): Promise<Run> {
  return api.get(`/api/runs/${encodeURIComponent(id)}`, { schema: RunSchema, ...(signal ? { signal } : {}) });
}

export function reviewRunQueryOptions(id: string) {
  return queryOptions({ queryKey: queryKeys.run(id), queryFn: ({ signal }) => getRun(id, signal), staleTime: 60_000 });
}

/** The job's runs for review (completed runs do not change; no polling). */
export function useReviewRuns(ids: readonly string[]) {
  return useQueries({ queries: ids.map((id) => reviewRunQueryOptions(id)) });
}
