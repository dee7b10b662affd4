import { queryOptions, useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { JobSchema, type CreateJobBody } from '../../../../shared/schemas/jobs';
import { QueueSchema, type Queue } from '../../../../shared/schemas/queue';
import { api } from '../../../lib/api-client';
import { queryKeys } from '../../../lib/query-keys';

/** GET /api/queue?withinDays= → open jobs (own first) and instruments that need a job. */
export function getQueue(withinDays: number, signal?: AbortSignal): Promise<Queue> {
  return api.get(`/api/queue?withinDays=${withinDays}`, { schema: QueueSchema, ...(signal ? { signal } : {}) });
}

export function queueQueryOptions(withinDays = 30) {
  return queryOptions({ queryKey: queryKeys.queue(withinDays), queryFn: ({ signal }) => getQueue(withinDays, signal) });
}

export function useQueue(withinDays: number, enabled = true) {
  return useQuery({ ...queueQueryOptions(withinDays), enabled });
}

/** POST /api/jobs (lead). */
export function useCreateJob() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (body: CreateJobBody) => api.post('/api/jobs', body, { schema: JobSchema }),
    onSuccess: () => qc.invalidateQueries({ queryKey: queryKeys.jobs }),
  });
}

/** POST /api/jobs/:id/assign (lead). */
export function useAssignJob() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: ({ jobId, assigneeId }: { jobId: string; assigneeId: string }) => api.post(`/api/jobs/${encodeURIComponent(jobId)}/assign`, { assigneeId }, { schema: JobSchema }),
    onSuccess: () => qc.invalidateQueries({ queryKey: queryKeys.jobs }),
  });
}
