import { useMutation, useQueryClient } from '@tanstack/react-query';
import { UserSchema, type InviteUserBody, type User } from '../../../../shared/schemas/users';
import { api } from '../../../lib/api-client';
import { usersQueryKey } from './get-users';

/** POST /api/users → 201 User. */
export function inviteUser(body: InviteUserBody): Promise<User> {
  return api.post('/api/users', body, { schema: UserSchema });
}

export function useInviteUser() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: inviteUser,
    onSuccess: () => qc.invalidateQueries({ queryKey: usersQueryKey }),
  });
}
