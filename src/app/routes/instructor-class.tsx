import { useQueryClient } from '@tanstack/react-query';
import { Link, useParams, useSearchParams, type LoaderFunctionArgs } from 'react-router-dom';
import { paths } from '../../config/paths.ts';
import { ErrorState, PageHeader, Panel, Spinner } from '../../components/ui/states.tsx';
import { useClassAssignments } from '../../features/assignments/api/get-class-assignments.ts';
import { AssignmentForm } from '../../features/assignments/components/assignment-form.tsx';
import { AssignmentManager } from '../../features/assignments/components/assignment-manager.tsx';
import { AssignmentsTable } from '../../features/assignments/components/assignments-table.tsx';
import { classQueryOptions, useClass } from '../../features/classes/api/get-class.ts';
import { classKeys } from '../../features/classes/api/get-classes.ts';
import { RosterUpload } from '../../features/classes/components/roster-upload.tsx';
import { StudentsPanel } from '../../features/classes/components/students-panel.tsx';
import { ClassRosterSync } from '../../features/lti/components/class-roster-sync.tsx';
import { useScenarios } from '../../features/scenarios/api/get-scenarios.ts';
import { queryClient } from '../../lib/query-client.ts';

export async function classLoader({ params }: LoaderFunctionArgs) {
  const id = Number(params.classId);
  if (Number.isInteger(id) && id > 0) await queryClient.ensureQueryData(classQueryOptions(id)).catch(() => null);
  return null;
}

export function ClassPage() {
  const id = Number(useParams().classId);
  const qc = useQueryClient();
  const cls = useClass(id);
  const assignments = useClassAssignments(id);
  const scenarios = useScenarios();
  const [search, setSearch] = useSearchParams();
  const managing = Number(search.get('assignment'));
  const manage = (id: number | null) => setSearch(id === null ? {} : { assignment: String(id) }, { replace: true });
  if (cls.isPending) return <Spinner label="Loading the class" />;
  if (cls.isError) return <ErrorState error={cls.error} retry={() => void cls.refetch()} what="class" back={{ to: paths.classes.href(), label: 'Back to the classes' }} />;
  const c = cls.data;
  const titleOf = (scenarioId: number) => scenarios.data?.find((s) => s.id === scenarioId)?.title;
  const managed = assignments.data?.find((a) => a.id === managing) ?? null;
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
                <>
                  <button
                    type="button"
                    onClick={() => manage(managing === a.id ? null : a.id)}
                    aria-expanded={managing === a.id}
                    className="inline-flex min-h-8 items-center rounded-md px-2.5 text-sm font-medium text-slate-900 ring-1 ring-slate-300 hover:bg-slate-50"
                  >
                    Manage<span className="sr-only"> {a.title}</span>
                  </button>
                  <Link to={paths.compare.href(a.id)} className="inline-flex min-h-8 items-center rounded-md px-2.5 text-sm font-medium text-slate-700 hover:bg-slate-200/70">
                    Compare<span className="sr-only"> {a.title}</span>
                  </Link>
                </>
              )}
            />
          )}
        </Panel>
        {managed && <AssignmentManager key={managed.id} assignment={managed} onClose={() => manage(null)} />}
        <div className="grid gap-6 xl:grid-cols-2">
          <Panel title="Assign a scenario">
            {scenarios.isPending ? (
              <Spinner label="Loading the library" />
            ) : scenarios.isError ? (
              <ErrorState error={scenarios.error} />
            ) : (
              <AssignmentForm classId={c.id} scenarios={scenarios.data.map((s) => ({ id: s.id, title: s.title, publishedVersion: s.publishedVersion }))} />
            )}
          </Panel>
          <div className="min-w-0 space-y-6">
            <ClassRosterSync classId={c.id} onSynced={() => void qc.invalidateQueries({ queryKey: classKeys.detail(c.id) })} />
            <Panel title="Students">
              <StudentsPanel cls={c} />
            </Panel>
            <Panel title="Upload a roster">
              <RosterUpload classId={c.id} />
            </Panel>
          </div>
        </div>
      </div>
    </>
  );
}
