import { PageHeader, Panel } from '../../components/ui/states.tsx';
import { useMe } from '../../features/auth/api/get-me.ts';
import { CreateUserForm } from '../../features/users/components/create-user-form.tsx';
import { UsersTable } from '../../features/users/components/users-table.tsx';

export function AdminUsersPage() {
  const me = useMe();
  return (
    <>
      <PageHeader title="Users" description="Accounts of the program: create instructors and students, change roles, disable accounts. New users without a password get an e-mailed invitation." />
      <div className="space-y-6">
        <Panel title="New user">
          <CreateUserForm />
        </Panel>
        <Panel title="Everyone">
          <UsersTable selfId={me.data?.user?.id ?? 0} />
        </Panel>
      </div>
    </>
  );
}
