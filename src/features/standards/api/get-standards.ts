import { useQuery } from '@tanstack/react-query';
import { STANDARD_REGISTER } from '../../../../shared/schemas/registers';
import { StandardSchema, type Standard, type StandardInput } from '../../../../shared/schemas/standards';
import { registerApi } from '../../../lib/register-api';

/** The standards register's API: list, its query options, and save (create or edit). */
export const standardsApi = registerApi<Standard, StandardInput>(STANDARD_REGISTER, StandardSchema);

/** Counts of due-soon and expired standards over the whole register (first 500). */
export function useStandardDueCounts() {
  return useQuery({
    ...standardsApi.listQueryOptions({ pageSize: 500 }),
    select: (r) => ({ total: r.total, dueSoon: r.items.filter((s) => s.dueState === 'due-soon').length, expired: r.items.filter((s) => s.dueState === 'expired').length }),
  });
}
