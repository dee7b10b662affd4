import { keepPreviousData, queryOptions, useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { z } from 'zod';
import { StandardSchema, type Standard, type StandardInput } from '../../../../shared/schemas/standards';
import { api, apiRequest } from '../../../lib/api-client';
import { queryKeys } from '../../../lib/query-keys';

export const standardsQueryKey = queryKeys.standards;

const StandardsReplySchema = z.object({ items: z.array(StandardSchema), total: z.number() });
export type StandardsReply = z.infer<typeof StandardsReplySchema>;

export interface StandardListParams {
  q?: string;
  sort?: string;
  dir?: 'asc' | 'desc';
  page?: number;
  pageSize?: number;
}
const DEFAULTS = { sort: 'dueOn', dir: 'asc', page: 1, pageSize: 25 } as const;

/** GET /api/standards?q&sort&dir&page&pageSize → { items, total }. */
export function getStandards(p: StandardListParams = {}, signal?: AbortSignal): Promise<StandardsReply> {
  const full = { ...DEFAULTS, ...p };
  const qs = new URLSearchParams({ sort: full.sort, dir: full.dir, page: String(full.page), pageSize: String(full.pageSize) });
  if (full.q?.trim()) qs.set('q', full.q.trim());
  return api.get(`/api/standards?${qs}`, { schema: StandardsReplySchema, ...(signal ? { signal } : {}) });
}

export function standardsQueryOptions(p: StandardListParams = {}) {
  const full = { ...DEFAULTS, ...p, q: p.q?.trim() ?? '' };
  return queryOptions({ queryKey: queryKeys.standardList(full), queryFn: ({ signal }) => getStandards(full, signal) });
}

export function useStandards(p: StandardListParams = {}) {
  return useQuery({ ...standardsQueryOptions(p), placeholderData: keepPreviousData });
}

/** Counts of due-soon and expired standards over the whole register (first 500). */
export function useStandardDueCounts() {
  return useQuery({ ...standardsQueryOptions({ pageSize: 500 }), select: (r) => ({ total: r.total, dueSoon: r.items.filter((s) => s.dueState === 'due-soon').length, expired: r.items.filter((s) => s.dueState === 'expired').length }) });
}

/** POST /api/standards or PUT /api/standards/:id; lead and admin. */
export function useSaveStandard(id: string | null) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (body: StandardInput): Promise<Standard> =>
      id ? apiRequest(`/api/standards/${encodeURIComponent(id)}`, { method: 'PUT', body, schema: StandardSchema }) : api.post('/api/standards', body, { schema: StandardSchema }),
    onSuccess: () => qc.invalidateQueries({ queryKey: standardsQueryKey }),
  });
}
