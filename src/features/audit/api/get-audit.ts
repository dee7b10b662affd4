import { useInfiniteQuery, useMutation } from '@tanstack/react-query';
import { z } from 'zod';
import { AuditEntrySchema, AuditVerifySchema, type AuditEntry } from '../../../../shared/schemas/records';
import { api } from '../../../lib/api-client';
import { queryKeys } from '../../../lib/query-keys';

const PAGE = 200;
const ReplySchema = z.object({ items: z.array(AuditEntrySchema) });

export interface AuditFilter {
  entity?: string;
  entityId?: string;
}

/** GET /api/audit → one page of the trail in chain order, after `afterId`. */
export async function getAudit(f: AuditFilter, afterId: number, signal?: AbortSignal): Promise<AuditEntry[]> {
  const q = new URLSearchParams({ limit: String(PAGE), afterId: String(afterId) });
  if (f.entity) q.set('entity', f.entity);
  if (f.entityId) q.set('entityId', f.entityId);
  return (await api.get(`/api/audit?${q}`, { schema: ReplySchema, ...(signal ? { signal } : {}) })).items;
}

export function useAuditTrail(f: AuditFilter) {
  return useInfiniteQuery({
    queryKey: queryKeys.audit(f.entity, f.entityId),
    queryFn: ({ pageParam, signal }) => getAudit(f, pageParam, signal),
    initialPageParam: 0,
    getNextPageParam: (last) => (last.length === PAGE ? last[last.length - 1]!.id : undefined),
  });
}

/** GET /api/audit/verify → whether every row still matches its hash and link. */
export function useVerifyAudit() {
  return useMutation({ mutationFn: () => api.get('/api/audit/verify', { schema: AuditVerifySchema }) });
}
