import { queryOptions, useQuery } from '@tanstack/react-query';
import { z } from 'zod';
import { InstrumentSchema } from '../../../../shared/schemas/instruments';
import { api } from '../../../lib/api-client';

export const instrumentsQueryKey = ['instruments'] as const;

const InstrumentsReplySchema = z.object({ items: z.array(InstrumentSchema), total: z.number() });
export type InstrumentsReply = z.infer<typeof InstrumentsReplySchema>;

/** GET /api/instruments → { items, total }. */
export function getInstruments(signal?: AbortSignal): Promise<InstrumentsReply> {
  return api.get('/api/instruments', { schema: InstrumentsReplySchema, ...(signal ? { signal } : {}) });
}

export function instrumentsQueryOptions() {
  return queryOptions({ queryKey: instrumentsQueryKey, queryFn: ({ signal }) => getInstruments(signal) });
}

export function useInstruments() {
  return useQuery(instrumentsQueryOptions());
}
