import { queryOptions, useQuery } from '@tanstack/react-query';
import { z } from 'zod';
import { RecordItemSchema, type RecordItem } from '../../../../shared/schemas/records';
import { api } from '../../../lib/api-client';
import { queryKeys } from '../../../lib/query-keys';

export type RecordsFilter = 'all' | 'approved' | 'submitted';

/** Calibration dates to show, inclusive (ISO dates); empty for no bound. */
export interface RecordsDates {
  from: string;
  to: string;
}
const NO_DATES: RecordsDates = { from: '', to: '' };

/** GET /api/records?status=&from=&to= → records with last signature, calibration date and results, newest calibration first. */
export async function getRecords(status: RecordsFilter, dates: RecordsDates = NO_DATES, signal?: AbortSignal): Promise<RecordItem[]> {
  const q = new URLSearchParams({ status });
  if (dates.from) q.set('from', dates.from);
  if (dates.to) q.set('to', dates.to);
  const r = await api.get(`/api/records?${q}`, { schema: z.object({ items: z.array(RecordItemSchema) }), ...(signal ? { signal } : {}) });
  return r.items;
}

export function recordsQueryOptions(status: RecordsFilter = 'all', dates: RecordsDates = NO_DATES) {
  return queryOptions({ queryKey: queryKeys.recordList(status, dates.from, dates.to), queryFn: ({ signal }) => getRecords(status, dates, signal) });
}

export function useRecords(status: RecordsFilter, dates: RecordsDates = NO_DATES) {
  return useQuery(recordsQueryOptions(status, dates));
}
