import { useState } from 'react';
import type { Role } from '../../../../shared/api/auth.ts';
import type { User } from '../../../../shared/api/users.ts';
import { Button } from '../../../components/ui/button.tsx';
import { EmptyState, ErrorState, Spinner } from '../../../components/ui/states.tsx';
import { useUsers } from '../api/get-users.ts';
import { useResendInvite, useUpdateUser } from '../api/mutate-user.ts';

function UserRow({ user, isSelf }: { user: User; isSelf: boolean }) {
  const update = useUpdateUser();
  const invite = useResendInvite();
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
          onChange={(e) => update.mutate({ id: user.id, role: e.target.value as Role })}
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
          <Button size="sm" variant="secondary" onClick={() => update.mutate({ id: user.id, disabled: !user.disabled })} disabled={update.isPending}>
            {user.disabled ? 'Enable' : 'Disable'}
            <span className="sr-only"> {user.name}</span>
          </Button>
        )}
        {update.error && <span className="text-xs text-stop-700">{update.error.message}</span>}
      </td>
    </tr>
  );
}

export function UsersTable({ selfId }: { selfId: number }) {
  const [q, setQ] = useState('');
  const users = useUsers(q);
  return (
    <div className="space-y-3">
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
                <UserRow key={u.id} user={u} isSelf={u.id === selfId} />
              ))}
            </tbody>
          </table>
        </div>
      )}
    </div>
  );
}
