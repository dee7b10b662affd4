import { queryOptions, useQuery } from '@tanstack/react-query';
import { JobDetailSchema, type JobDetail } from '../../../../shared/schemas/jobs';
import { api } from '../../../lib/api-client';
import { queryKeys } from '../../../lib/query-keys';

/** GET /api/jobs/:id → the job with checklist, standards, runs and blockers. */
export function getJob(id: string, signal?: AbortSignal): Promise<JobDetail> {
  return api.get(`/api/jobs/${encodeURIComponent(id)}`, { schema: JobDetailSchema, ...(signal ? { signal } : {}) });
}

export function jobQueryOptions(id: string) {
  return queryOptions({ queryKey: queryKeys.job(id), queryFn: ({ signal }) => getJob(id, signal), staleTime: 5_000 });
}

export function useJob(id: string | undefined) {
  return useQuery({ ...jobQueryOptions(id ?? ''), enabled: !!id });
}
