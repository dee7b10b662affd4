import { useMutation, useQueryClient } from '@tanstack/react-query';
import { api } from '../../../lib/api-client';

/** POST /api/auth/logout → 204. */
export async function logout(): Promise<void> {
  await api.post('/api/auth/logout');
}

/** Sign out; the cache is cleared whether or not the server answered, then `onDone` runs. */
export function useLogout(opts: { onDone?: () => void } = {}) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: logout,
    onSettled: () => {
      qc.clear();
      opts.onDone?.();
    },
  });
}
