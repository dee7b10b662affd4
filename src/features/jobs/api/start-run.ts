import { useMutation, useQueryClient } from '@tanstack/react-query';
import { RunSchema, type Run, type StartRunBody } from '../../../../shared/schemas/runs';
import { api } from '../../../lib/api-client';
import { queryKeys } from '../../../lib/query-keys';

/** POST /api/jobs/:id/runs { kind, trim? } → the new run with its plan. */
export function startRun(jobId: string, body: StartRunBody): Promise<Run> {
  return api.post(`/api/jobs/${encodeURIComponent(jobId)}/runs`, body, { schema: RunSchema });
}

export function useStartRun(jobId: string) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (body: StartRunBody) => startRun(jobId, body),
    onSuccess: (run) => {
      qc.setQueryData(queryKeys.run(run.id), run);
      void qc.invalidateQueries({ queryKey: queryKeys.job(jobId) });
    },
  });
}
