import { queryOptions, useQuery } from '@tanstack/react-query';
import { z } from 'zod';
import { RecordItemSchema, type RecordItem } from '../../../../shared/schemas/records';
import { api } from '../../../lib/api-client';

export type RecordsFilter = 'all' | 'approved' | 'submitted';

/** GET /api/records?status= → submitted and approved jobs with their last signature. */
export async function getRecords(status: RecordsFilter, signal?: AbortSignal): Promise<RecordItem[]> {
  const r = await api.get(`/api/records?status=${status}`, { schema: z.object({ items: z.array(RecordItemSchema) }), ...(signal ? { signal } : {}) });
  return r.items;
}

export function recordsQueryOptions(status: RecordsFilter = 'all') {
  return queryOptions({ queryKey: ['records', status], queryFn: ({ signal }) => getRecords(status, signal) });
}

export function useRecords(status: RecordsFilter) {
  return useQuery(recordsQueryOptions(status));
}
