import { useState } from 'react';
import type { Role } from '../../../../shared/api/auth.ts';
import type { User } from '../../../../shared/api/users.ts';
import { Button } from '../../../components/ui/button.tsx';
import { ConfirmDialog } from '../../../components/ui/confirm-dialog.tsx';
import { EmptyState, ErrorState, Spinner } from '../../../components/ui/states.tsx';
import { useUsers } from '../api/get-users.ts';
import { useResendInvite, useUpdateUser } from '../api/mutate-user.ts';

const ROLE_WORDS: Record<Role, string> = { student: 'a student', instructor: 'an instructor', admin: 'an admin' };
const ROLE_MEANS: Record<Role, string> = {
  student: 'They will run benches and see only their own attempts.',
  instructor: 'They will build scenarios and run the classes they teach, and see those students’ attempts.',
  admin: 'They will run every account, class and scenario of the program.',
};

type Pending = { kind: 'role'; role: Role } | { kind: 'disable' } | { kind: 'enable' };

function UserRow({ user, isSelf, onDone }: { user: User; isSelf: boolean; onDone: (message: string) => void }) {
  const update = useUpdateUser();
  const invite = useResendInvite();
  const [pending, setPending] = useState<Pending | null>(null);
  const confirm = () => {
    if (!pending) return;
    const input = pending.kind === 'role' ? { role: pending.role } : { disabled: pending.kind === 'disable' };
    update.mutate(
      { id: user.id, ...input },
      {
        onSuccess: () => {
          setPending(null);
          onDone(
            pending.kind === 'role'
              ? `${user.name} is now ${ROLE_WORDS[pending.role]}.`
              : pending.kind === 'disable'
                ? `${user.name} is disabled: signed out everywhere, and cannot sign in until enabled again.`
                : `${user.name} is enabled and can sign in again.`,
          );
        },
        onError: () => setPending(null),
      },
    );
  };
  return (
    <tr className={user.disabled ? 'bg-slate-50 text-slate-600' : ''}>
      <td className="px-3 py-2 font-medium">{user.name}</td>
      <td data-label="E-mail" className="break-all px-3 py-2 text-slate-600">{user.email}</td>
      <td data-label="Role" className="px-3 py-2">
        <label className="sr-only" htmlFor={`role-${user.id}`}>
          Role of {user.name}
        </label>
        <select
          id={`role-${user.id}`}
          value={user.role}
          disabled={isSelf || update.isPending}
          onChange={(e) => setPending({ kind: 'role', role: e.target.value as Role })}
          className="rounded-md border-0 bg-white py-1 pl-2 pr-7 text-sm ring-1 ring-slate-300"
        >
          <option value="student">Student</option>
          <option value="instructor">Instructor</option>
          <option value="admin">Admin</option>
        </select>
      </td>
      <td data-label="Status" className="px-3 py-2 text-sm">
        {user.disabled ? <span className="text-warn-700">Disabled</span> : user.hasPassword ? 'Active' : <span className="text-slate-500">Invited</span>}
      </td>
      <td className="space-x-2 whitespace-nowrap px-3 py-2 text-right max-sm:pt-1.5">
        {!user.hasPassword && !user.disabled && (
          <Button size="sm" variant="ghost" onClick={() => invite.mutate(user.id)} disabled={invite.isPending}>
            {invite.isSuccess ? 'Sent' : 'Resend invite'}
          </Button>
        )}
        {!isSelf && (
          <Button size="sm" variant="secondary" onClick={() => setPending({ kind: user.disabled ? 'enable' : 'disable' })} disabled={update.isPending}>
            {user.disabled ? 'Enable' : 'Disable'}
            <span className="sr-only"> {user.name}</span>
          </Button>
        )}
        {update.error && (
          <span role="alert" className="text-xs text-stop-700">
            {update.error.message}
          </span>
        )}
        <ConfirmDialog
          open={pending !== null}
          title={
            pending?.kind === 'role' ? `Make ${user.name} ${ROLE_WORDS[pending.role]}?` : pending?.kind === 'disable' ? `Disable ${user.name}?` : `Enable ${user.name}?`
          }
          confirmLabel={pending?.kind === 'role' ? 'Change the role' : pending?.kind === 'disable' ? 'Disable the account' : 'Enable the account'}
          busy={update.isPending}
          onConfirm={confirm}
          onCancel={() => setPending(null)}
        >
          {pending?.kind === 'role' && (
            <p>
              {user.email} is {ROLE_WORDS[user.role]} now. {ROLE_MEANS[pending.role]} The change applies from their next page.
            </p>
          )}
          {pending?.kind === 'disable' && <p>{user.email} will be signed out everywhere and cannot sign in until the account is enabled again. Their attempts and grades are kept.</p>}
          {pending?.kind === 'enable' && <p>{user.email} will be able to sign in again with their password.</p>}
        </ConfirmDialog>
      </td>
    </tr>
  );
}

export function UsersTable({ selfId }: { selfId: number }) {
  const [q, setQ] = useState('');
  const [done, setDone] = useState('');
  const users = useUsers(q);
  return (
    <div className="space-y-3">
      <p role="status" aria-live="polite" className="text-sm font-medium text-live-700" data-testid="users-done">
        {done}
      </p>
      <div>
        <label htmlFor="user-search" className="sr-only">
          Search users
        </label>
        <input
          id="user-search"
          type="search"
          placeholder="Search by name or e-mail"
          value={q}
          onChange={(e) => setQ(e.target.value)}
          className="w-full max-w-sm rounded-md border-0 px-3 py-2 text-sm ring-1 ring-slate-300"
        />
      </div>
      {users.isPending ? (
        <Spinner label="Loading users" />
      ) : users.isError ? (
        <ErrorState error={users.error} retry={() => void users.refetch()} />
      ) : users.data.length === 0 ? (
        <EmptyState title="No users match" />
      ) : (
        <div className="overflow-x-auto rounded-lg ring-1 ring-slate-200">
          <table className="stack-table min-w-full divide-y divide-slate-200 bg-white text-sm" aria-label="Users">
            <thead className="bg-slate-50 text-left text-xs font-semibold uppercase tracking-wide text-slate-500">
              <tr>
                <th scope="col" className="px-3 py-2">Name</th>
                <th scope="col" className="px-3 py-2">E-mail</th>
                <th scope="col" className="px-3 py-2">Role</th>
                <th scope="col" className="px-3 py-2">Status</th>
                <th scope="col" className="px-3 py-2 text-right">Actions</th>
              </tr>
            </thead>
            <tbody className="divide-y divide-slate-100">
              {users.data.map((u) => (
                <UserRow key={u.id} user={u} isSelf={u.id === selfId} onDone={setDone} />
              ))}
            </tbody>
          </table>
        </div>
      )}
    </div>
  );
}
