import type { QueryClient } from '@tanstack/react-query';
import { useState } from 'react';
import { useLoaderData, type LoaderFunctionArgs } from 'react-router';
import { Button } from '../../components/ui/button';
import { Dialog } from '../../components/ui/dialog';
import { ErrorNotice } from '../../components/ui/error-notice';
import { PageHeader } from '../../components/ui/page-header';
import { SearchInput } from '../../components/ui/search-input';
import { ListSkeleton } from '../../components/ui/skeleton';
import { toast } from '../../components/ui/toast';
import { usersQueryOptions, useUsers } from '../../features/users/api/get-users';
import { InviteUserForm } from '../../features/users/components/invite-user-form';
import { UsersTable } from '../../features/users/components/users-table';
import { requireArea } from '../auth-guard';
import { RouteErrorBoundary } from './route-error';

/** Admin only: the role guard answers 403 for anyone else. */
export const createLoader =
  (queryClient: QueryClient) =>
  async ({ request }: LoaderFunctionArgs) => {
    const me = await requireArea(queryClient, request, 'users');
    void queryClient.prefetchQuery(usersQueryOptions());
    return me;
  };

export function Component() {
  const me = useLoaderData<Awaited<ReturnType<ReturnType<typeof createLoader>>>>();
  const q = useUsers();
  const [inviting, setInviting] = useState(false);
  const [search, setSearch] = useState('');
  return (
    <>
      <PageHeader
        title="Users"
        description="Who can sign in, and with which role. Deactivated users keep their history but cannot sign in."
        actions={
          <>
            <SearchInput label="Search users" placeholder="Search name or email…" value={search} onValueChange={setSearch} />
            <Button onClick={() => setInviting(true)}>Invite user</Button>
          </>
        }
      />
      {q.isPending ? (
        <ListSkeleton />
      ) : q.isError ? (
        <ErrorNotice title="Could not load users" error={q.error} onRetry={() => void q.refetch()} />
      ) : (
        <UsersTable users={q.data} currentUserId={me.id} search={search} />
      )}
      <Dialog
        open={inviting}
        onClose={() => setInviting(false)}
        title="Invite a user"
        description="They sign in with this email and the initial password you give them, then choose their own."
      >
        <InviteUserForm
          onCancel={() => setInviting(false)}
          onInvited={(u) => {
            setInviting(false);
            toast(`${u.name} can now sign in`, { tone: 'success', description: u.email });
          }}
        />
      </Dialog>
    </>
  );
}

export const ErrorBoundary = RouteErrorBoundary;
