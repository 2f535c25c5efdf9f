import type { Assignment } from '../../../../shared/api/assignments.ts';
import { Button } from '../../../components/ui/button.tsx';
import { EmptyState } from '../../../components/ui/states.tsx';
import { useDeleteAssignment } from '../api/create-assignment.ts';
import { when } from '../../../lib/local-dates.ts';

function state(a: Assignment, now: number): { label: string; tone: string } {
  if (Date.parse(a.opensAt) > now) return { label: 'Not open yet', tone: 'text-slate-600' };
  if (Date.parse(a.dueAt) < now) return { label: 'Closed', tone: 'text-slate-600' };
  return { label: 'Open', tone: 'text-live-700' };
}

export function AssignmentsTable({
  assignments,
  scenarioTitle,
  rowActions,
}: {
  assignments: Assignment[];
  scenarioTitle: (scenarioId: number) => string | undefined;
  /** Links the page adds to each row (the class comparison, for one). */
  rowActions?: (a: Assignment) => React.ReactNode;
}) {
  const remove = useDeleteAssignment();
  const now = Date.now();
  if (assignments.length === 0) return <EmptyState title="Nothing assigned yet">Assign a published scenario below.</EmptyState>;
  return (
    <div className="space-y-2">
      <div className="overflow-x-auto rounded-lg ring-1 ring-slate-200">
        <table className="stack-table min-w-full divide-y divide-slate-200 bg-white text-sm" aria-label="Assignments">
          <thead className="bg-slate-50 text-left text-xs font-semibold uppercase tracking-wide text-slate-500">
            <tr>
              <th scope="col" className="px-3 py-2">Assignment</th>
              <th scope="col" className="px-3 py-2">Dates</th>
              <th scope="col" className="px-3 py-2">Attempts</th>
              <th scope="col" className="px-3 py-2">State</th>
              <th scope="col" className="px-3 py-2 text-right">
                <span className="sr-only">Actions</span>
              </th>
            </tr>
          </thead>
          <tbody className="divide-y divide-slate-100">
            {assignments.map((a) => {
              const s = state(a, now);
              return (
                <tr key={a.id}>
                  <td className="px-3 py-2">
                    <span className="font-medium">{a.title}</span>
                    <span className="block text-xs text-slate-500">
                      {scenarioTitle(a.scenarioId) ?? 'Scenario'} · version {a.scenarioVersion}
                    </span>
                  </td>
                  <td data-label="Dates" className="px-3 py-2 text-slate-600">
                    <span className="block">opens {when(a.opensAt)}</span>
                    <span className="block">due {when(a.dueAt)}</span>
                  </td>
                  <td data-label="Attempts" className="px-3 py-2">{a.attemptsAllowed}</td>
                  <td data-label="State" className={`px-3 py-2 font-medium ${s.tone}`}>{s.label}</td>
                  <td className="space-x-1 whitespace-nowrap px-3 py-2 text-right">
                    {rowActions?.(a)}
                    <Button size="sm" variant="ghost" disabled={remove.isPending} onClick={() => remove.mutate({ id: a.id, classId: a.classId })}>
                      Delete<span className="sr-only"> {a.title}</span>
                    </Button>
                  </td>
                </tr>
              );
            })}
          </tbody>
        </table>
      </div>
      {remove.error && (
        <p role="alert" className="text-sm text-stop-700">
          {remove.error.message}
        </p>
      )}
    </div>
  );
}
