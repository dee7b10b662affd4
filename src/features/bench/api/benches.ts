import { queryOptions, useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { BenchListSchema, BenchRecordSchema, RegisteredBenchSchema, type RegisterBenchBody } from '../../../../shared/schemas/benches';
import { api } from '../../../lib/api-client';

const benchesKey = ['benches'] as const;

/** GET /api/benches: registered benches (agents), this server's bench and the user's own browser bench. */
export function benchesQueryOptions() {
  return queryOptions({ queryKey: benchesKey, queryFn: ({ signal }) => api.get('/api/benches', { schema: BenchListSchema, signal }) });
}

export function useBenches() {
  return useQuery(benchesQueryOptions());
}

/** POST /api/benches → 201 { bench, token } (the token is shown once). */
export function useRegisterBench() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (body: RegisterBenchBody) => api.post('/api/benches', body, { schema: RegisteredBenchSchema }),
    onSuccess: () => qc.invalidateQueries({ queryKey: benchesKey }),
  });
}

/** POST /api/benches/:id/revoke. */
export function useRevokeBench() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (id: string) => api.post(`/api/benches/${encodeURIComponent(id)}/revoke`, {}, { schema: BenchRecordSchema }),
    onSuccess: () => qc.invalidateQueries({ queryKey: benchesKey }),
  });
}
