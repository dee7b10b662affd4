import { queryOptions, useQuery } from '@tanstack/react-query';
import { z } from 'zod';
import { StandardSchema } from '../../../../shared/schemas/standards';
import { api } from '../../../lib/api-client';
import { queryKeys } from '../../../lib/query-keys';

const ReplySchema = z.object({ items: z.array(StandardSchema), total: z.number() });

/** GET /api/standards → the register, to choose the standards of a job from. */
export function standardOptionsQueryOptions() {
  return queryOptions({
    queryKey: queryKeys.standards,
    queryFn: ({ signal }) => api.get('/api/standards', { schema: ReplySchema, signal }),
  });
}

export function useStandardOptions() {
  return useQuery(standardOptionsQueryOptions());
}
