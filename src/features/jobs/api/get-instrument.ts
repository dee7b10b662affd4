import { queryOptions, useQuery } from '@tanstack/react-query';
import { InstrumentSchema, type Instrument } from '../../../../shared/schemas/instruments';
import { api } from '../../../lib/api-client';
import { queryKeys } from '../../../lib/query-keys';

/** GET /api/instruments/:id → one instrument of the register. */
export function getInstrument(id: string, signal?: AbortSignal): Promise<Instrument> {
  return api.get(`/api/instruments/${encodeURIComponent(id)}`, { schema: InstrumentSchema, ...(signal ? { signal } : {}) });
}

export function instrumentQueryOptions(id: string) {
  return queryOptions({ queryKey: queryKeys.instrument(id), queryFn: ({ signal }) => getInstrument(id, signal), staleTime: 60_000 });
}

export function useInstrument(id: string | undefined) {
  return useQuery({ ...instrumentQueryOptions(id ?? ''), enabled: !!id });
}
