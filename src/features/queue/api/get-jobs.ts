import { queryOptions, useQuery } from '@tanstack/react-query';
import { z } from 'zod';
import { JobSchema, type Job } from '../../../../shared/schemas/jobs';
import { api } from '../../../lib/api-client';
import { queryKeys } from '../../../lib/query-keys';

export const jobsQueryKey = queryKeys.jobs;

const JobsReplySchema = z.object({ items: z.array(JobSchema) });

/** GET /api/jobs → { items: Job[] } (the server decides which jobs a role sees). */
export async function getJobs(signal?: AbortSignal): Promise<Job[]> {
  const reply = await api.get('/api/jobs', { schema: JobsReplySchema, ...(signal ? { signal } : {}) });
  return reply.items;
}

export function jobsQueryOptions() {
  return queryOptions({ queryKey: jobsQueryKey, queryFn: ({ signal }) => getJobs(signal) });
}

export function useJobs() {
  return useQuery(jobsQueryOptions());
}
