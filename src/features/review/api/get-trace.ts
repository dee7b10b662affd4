import { keepPreviousData, queryOptions, useQuery } from '@tanstack/react-query';
import { ReviewTraceSchema, type ReviewTrace } from '../../../../shared/schemas/trace';
import { api } from '../../../lib/api-client';
import { queryKeys } from '../../../lib/query-keys';

export interface TraceWindow {
  from: number;
  to: number;
}

/** GET /api/review/runs/:id/trace → raw samples in a window, or a min/mean/max envelope over a long one. */
export function getReviewTrace(runId: string, w: TraceWindow | null, signal?: AbortSignal): Promise<ReviewTrace> {
  const q = w ? `?from=${Math.floor(w.from)}&to=${Math.ceil(w.to)}` : '';
  return api.get(`/api/review/runs/${encodeURIComponent(runId)}/trace${q}`, { schema: ReviewTraceSchema, ...(signal ? { signal } : {}) });
}

export function reviewTraceQueryOptions(runId: string, w: TraceWindow | null) {
  return queryOptions({
    queryKey: queryKeys.reviewTrace(runId, w),
    queryFn: ({ signal }) => getReviewTrace(runId, w, signal),
    staleTime: 5 * 60_000,
  });
}

export function useReviewTrace(runId: string | null, w: TraceWindow | null) {
  return useQuery({ ...reviewTraceQueryOptions(runId ?? '', w), enabled: !!runId, placeholderData: keepPreviousData });
}
