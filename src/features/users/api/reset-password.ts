import { useMutation, useQueryClient } from '@tanstack/react-query';
import { ResetPasswordReplySchema, UserSchema, type ResetPasswordReply, type User } from '../../../../shared/schemas/users';
import { api } from '../../../lib/api-client';
import { usersQueryKey } from './get-users';

/** POST /api/users/:id/reset-password → the user and a one-time password (shown once). */
export function resetPassword(id: string): Promise<ResetPasswordReply> {
  return api.post(`/api/users/${encodeURIComponent(id)}/reset-password`, {}, { schema: ResetPasswordReplySchema });
}

/** POST /api/users/:id/unlock → the user, with sign-in and password re-entry unlocked. */
export function unlockUser(id: string): Promise<User> {
  return api.post(`/api/users/${encodeURIComponent(id)}/unlock`, {}, { schema: UserSchema });
}

export function useResetPassword() {
  const qc = useQueryClient();
  return useMutation({ mutationFn: resetPassword, onSuccess: () => qc.invalidateQueries({ queryKey: usersQueryKey }) });
}

export function useUnlockUser() {
  const qc = useQueryClient();
  return useMutation({ mutationFn: unlockUser, onSuccess: () => qc.invalidateQueries({ queryKey: usersQueryKey }) });
}
