import { queryOptions, useQuery } from '@tanstack/react-query';
import { InboxSchema, type Inbox } from '../../shared/schemas/records';
import { api } from './api-client';

/** Under `jobs`, so anything that refreshes the jobs refreshes the inbox too. */
export const reviewInboxKey = ['jobs', 'review-inbox'] as const;

/** GET /api/review/inbox → jobs awaiting review, oldest submission first (leads only). */
export function getReviewInbox(signal?: AbortSignal): Promise<Inbox> {
  return api.get('/api/review/inbox', { schema: InboxSchema, ...(signal ? { signal } : {}) });
}

export function reviewInboxQueryOptions() {
  return queryOptions({ queryKey: reviewInboxKey, queryFn: ({ signal }) => getReviewInbox(signal), staleTime: 15_000, refetchInterval: 60_000 });
}

/** The inbox for a lead; disabled (no request) for other roles. */
export function useReviewInbox(enabled: boolean) {
  return useQuery({ ...reviewInboxQueryOptions(), enabled });
}
