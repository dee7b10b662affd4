import { keepPreviousData, queryOptions, useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { z } from 'zod';
import { registerPath, type RegisterSpec } from '../../shared/schemas/registers';
import { api, apiRequest } from './api-client';
import { queryKeys } from './query-keys';

/** Search, sort and page of a register list, as the server takes them. */
export interface RegisterListParams {
  q?: string;
  sort?: string;
  dir?: 'asc' | 'desc';
  page?: number;
  pageSize?: number;
}

export interface RegisterApi<Row extends { id: string }, Input> {
  spec: RegisterSpec<Row>;
  /** GET /api/<plural>?q&sort&dir&page&pageSize → { items, total }. */
  list: (p?: RegisterListParams, signal?: AbortSignal) => Promise<{ items: Row[]; total: number }>;
  listQueryOptions: (p?: RegisterListParams) => ReturnType<typeof listOptions<Row>>;
  useList: (p?: RegisterListParams) => ReturnType<typeof useListQuery<Row>>;
  /** POST /api/<plural> (create) or PUT /api/<plural>/:id (edit); lead and admin. */
  useSave: (id: string | null) => ReturnType<typeof useSaveMutation<Row, Input>>;
}

function listOptions<Row>(key: readonly unknown[], fetch: (signal: AbortSignal) => Promise<{ items: Row[]; total: number }>) {
  return queryOptions({ queryKey: key, queryFn: ({ signal }) => fetch(signal) });
}

function useListQuery<Row>(options: ReturnType<typeof listOptions<Row>>) {
  return useQuery({ ...options, placeholderData: keepPreviousData });
}

function useSaveMutation<Row, Input>(save: (body: Input) => Promise<Row>, invalidate: readonly unknown[]) {
  const qc = useQueryClient();
  return useMutation({ mutationFn: save, onSuccess: () => qc.invalidateQueries({ queryKey: invalidate }) });
}

/**
 * The client of one register's API, built from its spec and row schema: a server-paged list (first
 * page sorted as the server sorts by default), its query options for route loaders, and the save
 * mutation that refreshes every list of the register.
 */
export function registerApi<Row extends { id: string }, Input>(spec: RegisterSpec<Row>, rowSchema: z.ZodType<Row>): RegisterApi<Row, Input> {
  const path = registerPath(spec);
  const reply = z.object({ items: z.array(rowSchema), total: z.number() });
  const defaults = { sort: spec.sortable[0], dir: 'asc', page: 1, pageSize: 25 } as const;
  const full = (p: RegisterListParams) => ({ ...defaults, ...p, q: p.q?.trim() ?? '' });
  const list = (p: RegisterListParams = {}, signal?: AbortSignal) => {
    const f = full(p);
    const qs = new URLSearchParams({ sort: f.sort, dir: f.dir, page: String(f.page), pageSize: String(f.pageSize) });
    if (f.q) qs.set('q', f.q);
    return api.get(`${path}?${qs}`, { schema: reply, ...(signal ? { signal } : {}) });
  };
  const listQueryOptions = (p: RegisterListParams = {}) => {
    const f = full(p);
    return listOptions<Row>(queryKeys.registerList(spec.plural, f), (signal) => list(f, signal));
  };
  return {
    spec,
    list,
    listQueryOptions,
    useList: (p = {}) => useListQuery(listQueryOptions(p)),
    useSave: (id) =>
      useSaveMutation<Row, Input>(
        (body) => (id ? apiRequest(`${path}/${encodeURIComponent(id)}`, { method: 'PUT', body, schema: rowSchema }) : api.post(path, body, { schema: rowSchema })),
        queryKeys.register(spec.plural),
      ),
  };
}
