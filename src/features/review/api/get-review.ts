import { queryOptions, useQuery } from '@tanstack/react-query';
import { ReviewBundleSchema, type ReviewBundle } from '../../../../shared/schemas/records';
import { api } from '../../../lib/api-client';

export const reviewQueryKey = (jobId: string) => ['jobs', jobId, 'review'] as const;

/** GET /api/jobs/:id/review → job, instrument, signatures, revisions, audit trail, who may sign. */
export function getReview(jobId: string, signal?: AbortSignal): Promise<ReviewBundle> {
  return api.get(`/api/jobs/${encodeURIComponent(jobId)}/review`, { schema: ReviewBundleSchema, ...(signal ? { signal } : {}) });
}

export function reviewQueryOptions(jobId: string) {
  return queryOptions({ queryKey: reviewQueryKey(jobId), queryFn: ({ signal }) => getReview(jobId, signal) });
}

export function useReview(jobId: string) {
  return useQuery(reviewQueryOptions(jobId));
}
