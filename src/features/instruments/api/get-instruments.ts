import { keepPreviousData, queryOptions, useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { z } from 'zod';
import { InstrumentSchema, type Instrument, type InstrumentInput } from '../../../../shared/schemas/instruments';
import { api, apiRequest } from '../../../lib/api-client';
import { queryKeys } from '../../../lib/query-keys';

export const instrumentsQueryKey = queryKeys.instruments;

const InstrumentsReplySchema = z.object({ items: z.array(InstrumentSchema), total: z.number() });
export type InstrumentsReply = z.infer<typeof InstrumentsReplySchema>;

/** Server-side list parameters (search, sort, page). */
export interface InstrumentListParams {
  q?: string;
  sort?: string;
  dir?: 'asc' | 'desc';
  page?: number;
  pageSize?: number;
}

const DEFAULTS = { sort: 'tag', dir: 'asc', page: 1, pageSize: 25 } as const;

/** GET /api/instruments?q&sort&dir&page&pageSize → { items, total }. */
export function getInstruments(p: InstrumentListParams = {}, signal?: AbortSignal): Promise<InstrumentsReply> {
  const full = { ...DEFAULTS, ...p };
  const qs = new URLSearchParams({ sort: full.sort, dir: full.dir, page: String(full.page), pageSize: String(full.pageSize) });
  if (full.q?.trim()) qs.set('q', full.q.trim());
  return api.get(`/api/instruments?${qs}`, { schema: InstrumentsReplySchema, ...(signal ? { signal } : {}) });
}

export function instrumentsQueryOptions(p: InstrumentListParams = {}) {
  const full = { ...DEFAULTS, ...p, q: p.q?.trim() ?? '' };
  return queryOptions({ queryKey: queryKeys.instrumentList(full), queryFn: ({ signal }) => getInstruments(full, signal) });
}

export function useInstruments(p: InstrumentListParams = {}) {
  return useQuery({ ...instrumentsQueryOptions(p), placeholderData: keepPreviousData });
}

/** POST /api/instruments (create) or PUT /api/instruments/:id (edit); lead and admin. */
export function useSaveInstrument(id: string | null) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (body: InstrumentInput): Promise<Instrument> =>
      id
        ? apiRequest(`/api/instruments/${encodeURIComponent(id)}`, { method: 'PUT', body, schema: InstrumentSchema })
        : api.post('/api/instruments', body, { schema: InstrumentSchema }),
    onSuccess: () => qc.invalidateQueries({ queryKey: instrumentsQueryKey }),
  });
}
