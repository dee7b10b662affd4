import { useMutation, useQueryClient } from '@tanstack/react-query';
import { MeSchema, type LoginBody, type Me } from '../../../../shared/schemas/auth';
import { api } from '../../../lib/api-client';
import { setSiteTimeZone } from '../../../lib/format';
import { meQueryKey } from './get-me';

/** POST /api/auth/login → Me (the server sets the session cookie). */
export async function login(body: LoginBody): Promise<Me> {
  const me = await api.post('/api/auth/login', body, { schema: MeSchema });
  setSiteTimeZone(me.timeZone);
  return me;
}

export function useLogin(opts: { onSuccess?: (me: Me) => void } = {}) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: login,
    onSuccess: (me) => {
      // A new session: drop anything cached for a previous user, then seed /me.
      qc.clear();
      qc.setQueryData(meQueryKey, me);
      opts.onSuccess?.(me);
    },
  });
}
