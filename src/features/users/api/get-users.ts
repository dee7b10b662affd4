import { queryOptions, useQuery } from '@tanstack/react-query';
import { z } from 'zod';
import { UserSchema } from '../../../../shared/schemas/users';
import { api } from '../../../lib/api-client';
import { queryKeys } from '../../../lib/query-keys';

export const usersQueryKey = queryKeys.users;

const UsersReplySchema = z.object({ items: z.array(UserSchema) });

/** GET /api/users (admin) → { items: User[] }. */
export async function getUsers(signal?: AbortSignal) {
  const reply = await api.get('/api/users', { schema: UsersReplySchema, ...(signal ? { signal } : {}) });
  return reply.items;
}

export function usersQueryOptions() {
  return queryOptions({ queryKey: usersQueryKey, queryFn: ({ signal }) => getUsers(signal) });
}

export function useUsers() {
  return useQuery(usersQueryOptions());
}
