import { useMutation, useQueryClient } from '@tanstack/react-query';
import { JobDetailSchema, type JobDetail } from '../../../../shared/schemas/jobs';
import { api } from '../../../lib/api-client';
import { queryKeys } from '../../../lib/query-keys';

/** POST /api/jobs/:id/submit → the submitted job; refused with the reasons while anything blocks it. */
export function submitJob(id: string): Promise<JobDetail> {
  return api.post(`/api/jobs/${encodeURIComponent(id)}/submit`, {}, { schema: JobDetailSchema });
}

export function useSubmitJob(id: string) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: () => submitJob(id),
    onSuccess: (job) => {
      qc.setQueryData(queryKeys.job(id), job);
      void qc.invalidateQueries({ queryKey: queryKeys.jobs, exact: true });
    },
  });
}
