import { queryOptions, useQuery } from '@tanstack/react-query';
import { OutboxMessageSchema, type OutboxMessage } from '../../../../shared/schemas/outbox';
import { api } from '../../../lib/api-client';
import { queryKeys } from '../../../lib/query-keys';

/** GET /api/outbox/:id → one message with its text. */
export async function getOutboxMessage(id: string, signal?: AbortSignal): Promise<OutboxMessage> {
  return api.get(`/api/outbox/${encodeURIComponent(id)}`, { schema: OutboxMessageSchema, ...(signal ? { signal } : {}) });
}

export function outboxMessageQueryOptions(id: string) {
  return queryOptions({ queryKey: queryKeys.outboxMessage(id), queryFn: ({ signal }) => getOutboxMessage(id, signal), staleTime: Infinity });
}

export function useOutboxMessage(id: string | null) {
  return useQuery({ ...outboxMessageQueryOptions(id ?? ''), enabled: !!id });
}
