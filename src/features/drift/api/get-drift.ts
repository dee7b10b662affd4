import { queryOptions, useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { InstrumentSchema } from '../../../../shared/schemas/instruments';
import { DriftReportSchema, type AcceptIntervalBody, type DriftReport } from '../../../../shared/schemas/drift';
import { api } from '../../../lib/api-client';
import { queryKeys } from '../../../lib/query-keys';

export const driftQueryKey = (id: string) => ['instruments', id, 'drift'] as const;

/** GET /api/instruments/:id/drift → as-found history, drift, prediction and interval recommendations. */
export function getDrift(id: string, signal?: AbortSignal): Promise<DriftReport> {
  return api.get(`/api/instruments/${encodeURIComponent(id)}/drift`, { schema: DriftReportSchema, ...(signal ? { signal } : {}) });
}

export function driftQueryOptions(id: string) {
  return queryOptions({ queryKey: driftQueryKey(id), queryFn: ({ signal }) => getDrift(id, signal) });
}

export function useDrift(id: string) {
  return useQuery(driftQueryOptions(id));
}

/** POST /api/instruments/:id/interval → the instrument with its new interval (audited). */
export function useAcceptInterval(id: string) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (body: AcceptIntervalBody) => api.post(`/api/instruments/${encodeURIComponent(id)}/interval`, body, { schema: InstrumentSchema }),
    onSuccess: () => qc.invalidateQueries({ queryKey: queryKeys.instruments }),
  });
}
