import { useMutation, useQueryClient } from '@tanstack/react-query';
import { MeSchema, type LoginBody, type Me } from '../../../../shared/schemas/auth';
import { api } from '../../../lib/api-client';
import { meQueryKey } from './get-me';

/** POST /api/auth/login → Me (the server sets the session cookie). */
export function login(body: LoginBody): Promise<Me> {
  return api.post('/api/auth/login', body, { schema: MeSchema });
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
