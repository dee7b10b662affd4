import { queryOptions, useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { z } from 'zod';
import { api } from '../../../lib/api-client';
import { queryKeys } from '../../../lib/query-keys';

/** GET /api/bench/storage: quarantined samples (newest first) and damaged journal batches set aside. */
export const StorageReviewSchema = z.object({
  quarantine: z.object({
    total: z.number(),
    unacknowledged: z.number(),
    items: z.array(
      z
        .object({
          seq: z.number(),
          benchId: z.string(),
          device: z.string(),
          runId: z.string().nullable(),
          /** The raw line with control characters escaped, cut to 120 characters. */
          preview: z.string(),
          reason: z.string(),
          at: z.string(),
          acknowledgedAt: z.string().nullable(),
        })
        .passthrough(),
    ),
  }),
  damaged: z.array(
    z
      .object({
        file: z.string(),
        offset: z.number(),
        bytes: z.number(),
        reason: z.string(),
        at: z.string(),
        acknowledgedAt: z.string().optional(),
      })
      .passthrough(),
  ),
});
export type StorageReview = z.infer<typeof StorageReviewSchema>;

const storageKey = [...queryKeys.bench, 'storage'] as const;

export function storageReviewQueryOptions() {
  return queryOptions({
    queryKey: storageKey,
    queryFn: ({ signal }) => api.get('/api/bench/storage?limit=50', { schema: StorageReviewSchema, signal }),
    refetchInterval: 10_000,
  });
}

export function useStorageReview() {
  return useQuery(storageReviewQueryOptions());
}

/** POST /api/bench/storage/acknowledge (admin, lead): marks everything set aside as reviewed. */
export function useAcknowledgeStorage() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: () => api.post('/api/bench/storage/acknowledge', {}, { schema: z.object({ acknowledged: z.object({ rows: z.number(), batches: z.number() }) }) }),
    onSuccess: () => void qc.invalidateQueries({ queryKey: queryKeys.bench }),
  });
}
