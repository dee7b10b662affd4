import { queryOptions, useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { JobHartSchema, type JobHart } from '../../../../shared/schemas/hart-job';
import { api } from '../../../lib/api-client';
import { queryKeys } from '../../../lib/query-keys';

/** Under the job's key, so invalidating the job refreshes it too. */
const hartKey = (jobId: string) => [...queryKeys.job(jobId), 'hart'] as const;
const base = (jobId: string) => `/api/jobs/${encodeURIComponent(jobId)}/hart`;

/** GET /api/jobs/:id/hart → the device as read, the check against the register, its resolution and the write commands. */
export function jobHartQueryOptions(jobId: string) {
  return queryOptions({ queryKey: hartKey(jobId), queryFn: ({ signal }) => api.get(base(jobId), { schema: JobHartSchema, signal }), staleTime: 5_000 });
}

export function useJobHart(jobId: string) {
  return useQuery(jobHartQueryOptions(jobId));
}

/** POST check (reads commands 0, 13, 15), correct-register or as-found (each with a reason). */
export function useJobHartAction(jobId: string) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (a: { kind: 'check' } | { kind: 'correct-register' | 'as-found'; reason: string }): Promise<JobHart> =>
      api.post(`${base(jobId)}/${a.kind}`, a.kind === 'check' ? {} : { reason: a.reason }, { schema: JobHartSchema }),
    onSuccess: (h) => {
      qc.setQueryData(hartKey(jobId), h);
      // A correction changes the register (the plan of the next run).
      void qc.invalidateQueries({ queryKey: queryKeys.job(jobId) });
      void qc.invalidateQueries({ queryKey: queryKeys.instruments });
    },
  });
}

/** GET while a trim runs: polled so the "loop current fixed" state and the steps show as they happen. */
export function useJobHartLive(jobId: string) {
  return useQuery({ ...jobHartQueryOptions(jobId), refetchInterval: (q) => (q.state.data?.trims.at(-1)?.status === 'running' || q.state.data?.loopCurrentFixed ? 500 : false) });
}

/** POST output-trim (cautions confirmed), output-trim/abort, zero-trim (zero held). */
export function useHartTrimAction(jobId: string) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (kind: 'output-trim' | 'abort' | 'zero-trim'): Promise<JobHart> =>
      kind === 'output-trim'
        ? api.post(`${base(jobId)}/output-trim`, { loopInManual: true, operatorsInformed: true }, { schema: JobHartSchema })
        : kind === 'abort'
          ? api.post(`${base(jobId)}/output-trim/abort`, {}, { schema: JobHartSchema })
          : api.post(`${base(jobId)}/zero-trim`, { zeroHeld: true }, { schema: JobHartSchema }),
    onSuccess: (h) => qc.setQueryData(hartKey(jobId), h),
  });
}
