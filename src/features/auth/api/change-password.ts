import { useMutation, useQueryClient } from '@tanstack/react-query';
import { MeSchema, type ChangePasswordBody, type Me } from '../../../../shared/schemas/auth';
import { api } from '../../../lib/api-client';
import { setSiteTimeZone } from '../../../lib/format';
import { meQueryKey } from './get-me';

/** POST /api/auth/password {current, next} → Me. Every other session of the user ends; this one stays. */
export async function changePassword(body: ChangePasswordBody): Promise<Me> {
  const me = await api.post('/api/auth/password', body, { schema: MeSchema });
  setSiteTimeZone(me.timeZone);
  return me;
}

export function useChangePassword(opts: { onSuccess?: (me: Me) => void } = {}) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: changePassword,
    onSuccess: (me) => {
      qc.setQueryData(meQueryKey, me);
      opts.onSuccess?.(me);
    },
  });
}
