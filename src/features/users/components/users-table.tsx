import { useMemo, useState } from 'react';
import { ROLES, type Role } from '../../../../shared/schemas/auth';
import type { User } from '../../../../shared/schemas/users';
import { Badge } from '../../../components/ui/badge';
import { Button } from '../../../components/ui/button';
import { Dialog } from '../../../components/ui/dialog';
import { DataTable, type ColumnDef } from '../../../components/ui/table';
import { toast } from '../../../components/ui/toast';
import { isApiError } from '../../../lib/api-client';
import { ROLE_LABELS } from '../../../lib/authorization';
import { isoDay } from '../../../lib/format';
import { useResetPassword, useUnlockUser } from '../api/reset-password';
import { useUpdateUser } from '../api/update-user';

export interface UsersTableProps {
  users: readonly User[];
  /** The signed-in admin; they cannot demote or deactivate themselves here. */
  currentUserId: string;
  search?: string;
}

function errorText(e: unknown): string {
  return isApiError(e) ? e.message : 'Something went wrong.';
}

const isLocked = (u: User) => !!(u.signInLockedUntil || u.signingLockedUntil);

export function UsersTable({ users, currentUserId, search = '' }: UsersTableProps) {
  const update = useUpdateUser();
  const reset = useResetPassword();
  const unlock = useUnlockUser();
  /** The one-time password of the last reset, shown once in a dialog. */
  const [issued, setIssued] = useState<{ name: string; email: string; password: string } | null>(null);

  const columns = useMemo<ColumnDef<User>[]>(
    () => [
      {
        accessorKey: 'name',
        header: 'Name',
        cell: ({ row }) => (
          <div>
            <div className="font-medium text-ink">{row.original.name}</div>
            <div className="text-xs text-ink-muted">{row.original.email}</div>
          </div>
        ),
      },
      {
        accessorKey: 'role',
        header: 'Role',
        cell: ({ row }) => {
          const u = row.original;
          const self = u.id === currentUserId;
          return (
            <select
              aria-label={`Role for ${u.name}`}
              value={u.role}
              disabled={self || update.isPending}
              title={self ? 'You cannot change your own role' : undefined}
              onChange={(e) => {
                const role = e.target.value as Role;
                update.mutate(
                  { id: u.id, body: { role } },
                  {
                    onSuccess: (nu) => toast(`${nu.name} is now ${ROLE_LABELS[nu.role].toLowerCase()}`, { tone: 'success' }),
                    onError: (err) => toast('Role not changed', { tone: 'error', description: errorText(err) }),
                  },
                );
              }}
              className="h-8 rounded-md border border-line-strong bg-surface px-2 text-sm text-ink focus-visible:outline-2 focus-visible:outline-focus disabled:opacity-60"
            >
              {ROLES.map((r) => (
                <option key={r} value={r}>
                  {ROLE_LABELS[r]}
                </option>
              ))}
            </select>
          );
        },
      },
      {
        accessorKey: 'active',
        header: 'Status',
        cell: ({ row }) => {
          const u = row.original;
          return (
            <div className="flex flex-wrap gap-1.5">
              {u.active ? (
                <Badge tone="ok" dot>
                  Active
                </Badge>
              ) : (
                <Badge tone="neutral" dot>
                  Deactivated
                </Badge>
              )}
              {u.signInLockedUntil && <Badge tone="danger">Sign-in locked</Badge>}
              {u.signingLockedUntil && <Badge tone="danger">Signing locked</Badge>}
              {u.mustChangePassword && <Badge tone="neutral">New password due</Badge>}
            </div>
          );
        },
      },
      {
        accessorKey: 'createdAt',
        header: 'Added',
        cell: ({ row }) => <span className="num text-ink-muted">{isoDay(row.original.createdAt)}</span>,
      },
      {
        id: 'actions',
        header: () => <span className="sr-only">Actions</span>,
        enableSorting: false,
        cell: ({ row }) => {
          const u = row.original;
          if (u.id === currentUserId) return <span className="text-xs text-ink-faint">You</span>;
          return (
            <div className="flex flex-wrap justify-end gap-2">
              {isLocked(u) && (
                <Button
                  size="sm"
                  variant="secondary"
                  disabled={unlock.isPending}
                  onClick={() =>
                    unlock.mutate(u.id, {
                      onSuccess: (nu) => toast(`${nu.name} unlocked`, { tone: 'success' }),
                      onError: (err) => toast('Not unlocked', { tone: 'error', description: errorText(err) }),
                    })
                  }
                >
                  Unlock
                </Button>
              )}
              <Button
                size="sm"
                variant="ghost"
                disabled={reset.isPending || !u.active}
                onClick={() =>
                  reset.mutate(u.id, {
                    onSuccess: (r) => setIssued({ name: r.user.name, email: r.user.email, password: r.password }),
                    onError: (err) => toast('Password not reset', { tone: 'error', description: errorText(err) }),
                  })
                }
              >
                Reset password
              </Button>
              <Button
                size="sm"
                variant={u.active ? 'ghost' : 'secondary'}
                disabled={update.isPending}
                onClick={() =>
                  update.mutate(
                    { id: u.id, body: { active: !u.active } },
                    {
                      onSuccess: (nu) => toast(nu.active ? `${nu.name} reactivated` : `${nu.name} deactivated`, { tone: 'success' }),
                      onError: (err) => toast('No change made', { tone: 'error', description: errorText(err) }),
                    },
                  )
                }
              >
                {u.active ? 'Deactivate' : 'Reactivate'}
              </Button>
            </div>
          );
        },
      },
    ],
    [currentUserId, update, reset, unlock],
  );

  return (
    <>
      <Dialog
        open={!!issued}
        onClose={() => setIssued(null)}
        title="One-time password"
        description="Give it to the person in person or by phone. It is shown only now; they choose their own at the next sign-in, and their open sessions have ended."
      >
        {issued && (
          <div className="flex flex-col gap-3">
            <div className="text-sm text-ink-muted">
              {issued.name} · {issued.email}
            </div>
            <output data-testid="one-time-password" className="num rounded-md border border-line bg-surface px-3 py-2 text-lg tracking-wide text-ink select-all">
              {issued.password}
            </output>
            <Button onClick={() => setIssued(null)}>Done</Button>
          </div>
        )}
      </Dialog>
      <DataTable
        caption="Users"
        data={users}
        columns={columns}
        globalFilter={search}
        globalFilterFn={(row, _col, value: string) => {
          const q = value.trim().toLowerCase();
          const u = row.original;
          return !q || u.name.toLowerCase().includes(q) || u.email.toLowerCase().includes(q) || u.role.includes(q);
        }}
        initialSorting={[{ id: 'name', desc: false }]}
        getRowId={(u) => u.id}
        empty="No users match."
      />
    </>
  );
}
