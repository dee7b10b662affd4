import { useMutation, useQueryClient } from '@tanstack/react-query';
import { JobDetailSchema, type JobDetail, type SubmitJobBody } from '../../../../shared/schemas/jobs';
import { api } from '../../../lib/api-client';
import { queryKeys } from '../../../lib/query-keys';

/** POST /api/jobs/:id/submit → the submitted job; refused with the reasons while anything blocks it. After a return, `reply` answers the lead. */
export function submitJob(id: string, body: SubmitJobBody = {}): Promise<JobDetail> {
  return api.post(`/api/jobs/${encodeURIComponent(id)}/submit`, body, { schema: JobDetailSchema });
}

export function useSubmitJob(id: string) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (body: SubmitJobBody | void) => submitJob(id, body ?? {}),
    onSuccess: (job) => {
      qc.setQueryData(queryKeys.job(id), job);
      void qc.invalidateQueries({ queryKey: queryKeys.jobs, exact: true });
    },
  });
}
