import { Link, useNavigate } from 'react-router-dom';
import { paths } from '../../config/paths.ts';
import { useMe } from '../../features/auth/api/get-me.ts';
import { EmptyState, ErrorState, PageHeader, Panel, Spinner } from '../../components/ui/states.tsx';
import { classesQueryOptions, useClasses } from '../../features/classes/api/get-classes.ts';
import { CreateClassForm } from '../../features/classes/components/create-class-form.tsx';
import { queryClient } from '../../lib/query-client.ts';

export async function classesLoader() {
  await queryClient.ensureQueryData(classesQueryOptions());
  return null;
}

export function ClassesPage() {
  const classes = useClasses();
  const navigate = useNavigate();
  const isAdmin = useMe().data?.user?.role === 'admin';
  return (
    <>
      <PageHeader
        title="Classes"
        description={isAdmin ? 'Every section of the school, its students and assignments.' : 'Your sections, their students and assignments.'}
      />
      <div className="space-y-6">
        {classes.isPending ? (
          <Spinner label="Loading classes" />
        ) : classes.isError ? (
          <ErrorState error={classes.error} retry={() => void classes.refetch()} />
        ) : classes.data.length === 0 ? (
          <EmptyState title="No classes yet">Create one below.</EmptyState>
        ) : (
          <ul className="grid gap-3 md:grid-cols-2 xl:grid-cols-3" aria-label="Classes">
            {classes.data.map((c) => (
              <li key={c.id}>
                <Link to={paths.class.href(c.id)} className="block rounded-xl bg-white p-4 shadow-sm ring-1 ring-slate-200 hover:ring-slate-400">
                  <p className="font-semibold text-slate-900">{c.name}</p>
                  <p className="text-xs text-slate-500">
                    {c.term || 'No term'} · {c.instructors.map((i) => i.name).join(', ') || 'No instructor'}
                  </p>
                  <p className="mt-3 text-sm text-slate-700">
                    {c.studentCount} {c.studentCount === 1 ? 'student' : 'students'} · {c.assignmentCount} {c.assignmentCount === 1 ? 'assignment' : 'assignments'}
                  </p>
                </Link>
              </li>
            ))}
          </ul>
        )}
        <Panel title="New class">
          <CreateClassForm onCreated={(id) => void navigate(paths.class.href(id))} />
        </Panel>
      </div>
    </>
  );
}
