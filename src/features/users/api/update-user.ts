import { useMutation, useQueryClient } from '@tanstack/react-query';
import { UserSchema, type UpdateUserBody, type User } from '../../../../shared/schemas/users';
import { api } from '../../../lib/api-client';
import { usersQueryKey } from './get-users';

/** PATCH /api/users/:id → 200 User (role, active, name). */
export function updateUser(id: string, body: UpdateUserBody): Promise<User> {
  return api.patch(`/api/users/${encodeURIComponent(id)}`, body, { schema: UserSchema });
}

export function useUpdateUser() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: ({ id, body }: { id: string; body: UpdateUserBody }) => updateUser(id, body),
    onSuccess: (user) => {
      qc.setQueryData<User[]>(usersQueryKey, (old) => old?.map((u) => (u.id === user.id ? user : u)));
      return qc.invalidateQueries({ queryKey: usersQueryKey });
    },
  });
}
