import { queryOptions, useQuery } from '@tanstack/react-query';
import { z } from 'zod';
import { OutboxSummarySchema, type OutboxSummary } from '../../../../shared/schemas/outbox';
import { api } from '../../../lib/api-client';
import { queryKeys } from '../../../lib/query-keys';

/** GET /api/outbox → the messages the local mail server received, newest first. */
export async function getOutbox(signal?: AbortSignal): Promise<OutboxSummary[]> {
  const r = await api.get('/api/outbox', { schema: z.object({ items: z.array(OutboxSummarySchema) }), ...(signal ? { signal } : {}) });
  return r.items;
}

export function outboxQueryOptions() {
  return queryOptions({ queryKey: queryKeys.outbox, queryFn: ({ signal }) => getOutbox(signal), refetchInterval: 10_000 });
}

export function useOutbox() {
  return useQuery(outboxQueryOptions());
}
