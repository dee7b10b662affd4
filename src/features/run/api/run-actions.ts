import { useMutation, useQueryClient } from '@tanstack/react-query';
import { RunSchema, type Run } from '../../../../shared/schemas/runs';
import { api } from '../../../lib/api-client';
import { queryKeys } from '../../../lib/query-keys';

const runPath = (id: string) => `/api/runs/${encodeURIComponent(id)}`;

/** Replies of the run actions may be the run or nothing; either way the run is refetched. */
async function post(path: string, body: unknown): Promise<Run | undefined> {
  const reply = await api.post(path, body);
  const parsed = RunSchema.safeParse(reply);
  return parsed.success ? parsed.data : undefined;
}

/** POST /api/runs/:id/points/:index/capture { reason } — manual capture. */
export const captureManually = (runId: string, index: number, reason: string) => post(`${runPath(runId)}/points/${index}/capture`, { reason });
/** POST /api/runs/:id/points/:index/redo { reason? } — measure the point again. */
export const redoPoint = (runId: string, index: number, reason?: string) => post(`${runPath(runId)}/points/${index}/redo`, reason ? { reason } : {});
/** POST /api/runs/:id/pause|resume|abort. */
export const controlRun = (runId: string, action: 'pause' | 'resume' | 'abort') => post(`${runPath(runId)}/${action}`, {});

export type RunAction =
  | { type: 'capture'; index: number; reason: string }
  | { type: 'redo'; index: number; reason?: string }
  | { type: 'pause' | 'resume' | 'abort' };

export function useRunAction(runId: string) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (a: RunAction) =>
      a.type === 'capture' ? captureManually(runId, a.index, a.reason) : a.type === 'redo' ? redoPoint(runId, a.index, a.reason) : controlRun(runId, a.type),
    onSuccess: (run) => {
      if (run) qc.setQueryData(queryKeys.run(runId), run);
      void qc.invalidateQueries({ queryKey: queryKeys.run(runId) });
      if (run) void qc.invalidateQueries({ queryKey: queryKeys.job(run.jobId) });
    },
  });
}
