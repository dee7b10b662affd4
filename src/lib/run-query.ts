import { queryOptions } from '@tanstack/react-query';
import { RunSchema, type Run } from '../../shared/schemas/runs';
import { api } from './api-client';
import { queryKeys } from './query-keys';

/** GET /api/runs/:id → plan, point states, captured values and results. */
export function getRun(id: string, signal?: AbortSignal): Promise<Run> {
  return api.get(`/api/runs/${encodeURIComponent(id)}`, { schema: RunSchema, ...(signal ? { signal } : {}) });
}

/**
 * The one query of a run, shared by the capture screen, the job page and the review: one key, one
 * fetcher, one staleness. Stream events patch and invalidate it (lib/apply-stream-message.ts); a
 * screen that must see a run move while the stream is down adds its own `refetchInterval`.
 */
export function runQueryOptions(id: string) {
  return queryOptions({ queryKey: queryKeys.run(id), queryFn: ({ signal }) => getRun(id, signal), staleTime: 2_000 });
}
