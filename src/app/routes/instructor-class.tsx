import { Link, useParams, type LoaderFunctionArgs } from 'react-router-dom';
import { paths } from '../../config/paths.ts';
import { ErrorState, PageHeader, Panel, Spinner } from '../../components/ui/states.tsx';
import { useClassAssignments } from '../../features/assignments/api/get-class-assignments.ts';
import { AssignmentForm } from '../../features/assignments/components/assignment-form.tsx';
import { AssignmentsTable } from '../../features/assignments/components/assignments-table.tsx';
import { classQueryOptions, useClass } from '../../features/classes/api/get-class.ts';
import { RosterUpload } from '../../features/classes/components/roster-upload.tsx';
import { StudentsPanel } from '../../features/classes/components/students-panel.tsx';
import { useScenarios } from '../../features/scenarios/api/get-scenarios.ts';
import { queryClient } from '../../lib/query-client.ts';

export async function classLoader({ params }: LoaderFunctionArgs) {
  const id = Number(params.classId);
  if (Number.isInteger(id) && id > 0) await queryClient.ensureQueryData(classQueryOptions(id)).catch(() => null);
  return null;
}

export function ClassPage() {
  const id = Number(useParams().classId);
  const cls = useClass(id);
  const assignments = useClassAssignments(id);
  const scenarios = useScenarios();
  if (cls.isPending) return <Spinner label="Loading the class" />;
  if (cls.isError) return <ErrorState error={cls.error} retry={() => void cls.refetch()} what="class" back={{ to: paths.classes.href(), label: 'Back to the classes' }} />;
  const c = cls.data;
  const titleOf = (scenarioId: number) => scenarios.data?.find((s) => s.id === scenarioId)?.title;
  return (
    <>
      <PageHeader
        title={c.name}
        description={`${c.term || 'No term'} · taught by ${c.instructors.map((i) => i.name).join(', ') || 'nobody yet'} · ${c.studentCount} students`}
        actions={
          <>
            <Link to={paths.live.href(c.id)} className="rounded-md bg-slate-900 px-3.5 py-2 text-sm font-medium text-white hover:bg-slate-700">
              Live board
            </Link>
            <Link to={paths.classes.href()} className="rounded-md px-3.5 py-2 text-sm font-medium text-slate-700 hover:bg-slate-200/70">
              All classes
            </Link>
          </>
        }
      />
      <div className="grid gap-6 xl:grid-cols-2">
        <div className="space-y-6">
          <Panel title="Assignments">
            {assignments.isPending ? (
              <Spinner label="Loading assignments" />
            ) : assignments.isError ? (
              <ErrorState error={assignments.error} retry={() => void assignments.refetch()} />
            ) : (
              <AssignmentsTable
                assignments={assignments.data}
                scenarioTitle={titleOf}
                rowActions={(a) => (
                  <Link to={paths.compare.href(a.id)} className="rounded-md px-2.5 py-1 text-sm font-medium text-slate-700 hover:bg-slate-200/70">
                    Compare<span className="sr-only"> {a.title}</span>
                  </Link>
                )}
              />
            )}
          </Panel>
          <Panel title="Assign a scenario">
            {scenarios.isPending ? (
              <Spinner label="Loading the library" />
            ) : scenarios.isError ? (
              <ErrorState error={scenarios.error} />
            ) : (
              <AssignmentForm classId={c.id} scenarios={scenarios.data.map((s) => ({ id: s.id, title: s.title, publishedVersion: s.publishedVersion }))} />
            )}
          </Panel>
        </div>
        <div className="space-y-6">
          <Panel title="Students">
            <StudentsPanel cls={c} />
          </Panel>
          <Panel title="Upload a roster">
            <RosterUpload classId={c.id} />
          </Panel>
        </div>
      </div>
    </>
  );
}
