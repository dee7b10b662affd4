import { queryOptions, useQuery } from '@tanstack/react-query';
import { z } from 'zod';
import { StandardSchema } from '../../../../shared/schemas/standards';
import { api } from '../../../lib/api-client';

export const standardsQueryKey = ['standards'] as const;

const StandardsReplySchema = z.object({ items: z.array(StandardSchema), total: z.number() });
export type StandardsReply = z.infer<typeof StandardsReplySchema>;

/** GET /api/standards → { items, total }. */
export function getStandards(signal?: AbortSignal): Promise<StandardsReply> {
  return api.get('/api/standards', { schema: StandardsReplySchema, ...(signal ? { signal } : {}) });
}

export function standardsQueryOptions() {
  return queryOptions({ queryKey: standardsQueryKey, queryFn: ({ signal }) => getStandards(signal) });
}

export function useStandards() {
  return useQuery(standardsQueryOptions());
}
