import type { MyAssignment } from '../../../../shared/api/assignments.ts';
import { DIFFICULTY_LABELS } from '../../../../shared/scenario.ts';
import { Button } from '../../../components/ui/button.tsx';
import { EmptyState } from '../../../components/ui/states.tsx';

const when = (iso: string) => new Date(iso).toLocaleString(undefined, { dateStyle: 'medium', timeStyle: 'short' });

/** A student's assignments: what to do, by when, and how many attempts are left. */
export function MyAssignmentsList({ assignments, onStart }: { assignments: MyAssignment[]; onStart: (assignmentId: number) => void }) {
  if (assignments.length === 0) return <EmptyState title="No scenarios are assigned to you yet">Your instructor’s assignments appear here when they open.</EmptyState>;
  return (
    <ul className="grid gap-3 md:grid-cols-2" aria-label="Your assignments">
      {assignments.map((a) => {
        const left = Math.max(0, a.attemptsAllowed - a.attemptsUsed);
        const canStart = !a.closed && left > 0;
        return (
          <li key={a.id} className="flex flex-col rounded-xl bg-white p-4 shadow-sm ring-1 ring-slate-200">
            <div className="flex items-start justify-between gap-2">
              <div>
                <h3 className="font-semibold text-slate-900">{a.title}</h3>
                <p className="text-xs text-slate-500">
                  {a.className} · {a.vehicleName} · {DIFFICULTY_LABELS[a.difficulty]}
                </p>
              </div>
              {a.closed ? <span className="rounded bg-slate-100 px-1.5 py-0.5 text-xs text-slate-600">Closed</span> : null}
            </div>
            <p className="mt-2 text-sm text-slate-700">{a.summary}</p>
            <dl className="mt-3 grid grid-cols-3 gap-2 text-xs">
              <div>
                <dt className="text-slate-500">Opened</dt>
                <dd className="text-slate-800">{when(a.opensAt)}</dd>
              </div>
              <div>
                <dt className="text-slate-500">Due</dt>
                <dd className="font-medium text-slate-900">{when(a.dueAt)}</dd>
              </div>
              <div>
                <dt className="text-slate-500">Attempts</dt>
                <dd className="text-slate-800">
                  {a.attemptsUsed} of {a.attemptsAllowed} used
                </dd>
              </div>
            </dl>
            <div className="mt-4 flex items-center justify-end gap-2">
              {!canStart && <span className="text-xs text-slate-500">{a.closed ? 'Past the due date' : 'No attempts left'}</span>}
              <Button disabled={!canStart} onClick={() => onStart(a.id)}>
                Start<span className="sr-only"> {a.title}</span>
              </Button>
            </div>
          </li>
        );
      })}
    </ul>
  );
}
