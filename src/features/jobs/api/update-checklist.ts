import { useMutation, useQueryClient } from '@tanstack/react-query';
import { JobDetailSchema, type ChecklistPatch, type JobDetail } from '../../../../shared/schemas/jobs';
import { apiRequest } from '../../../lib/api-client';
import { queryKeys } from '../../../lib/query-keys';

/** PUT /api/jobs/:id/checklist → the job after the change (the server stamps who and when). */
export function updateChecklist(id: string, patch: ChecklistPatch): Promise<JobDetail> {
  return apiRequest(`/api/jobs/${encodeURIComponent(id)}/checklist`, { method: 'PUT', body: patch, schema: JobDetailSchema });
}

export function useUpdateChecklist(id: string) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (patch: ChecklistPatch) => updateChecklist(id, patch),
    onSuccess: (job) => {
      qc.setQueryData(queryKeys.job(id), job);
      void qc.invalidateQueries({ queryKey: queryKeys.jobs, exact: true });
    },
  });
}
