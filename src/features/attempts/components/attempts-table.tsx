/** The student's own attempts: scenario, date, time to diagnosis, grade and status, with a link to open or continue. */
import { Link } from 'react-router-dom';
import type { MyAttemptRow } from '../../../../shared/api/attempts.ts';
import { paths } from '../../../config/paths.ts';
import { EmptyState } from '../../../components/ui/states.tsx';

export function formatDuration(ms: number | null): string {
  if (ms === null) return '—';
  const s = Math.round(ms / 1000);
  return `${Math.floor(s / 60)} min ${String(s % 60).padStart(2, '0')} s`;
}

const dateFmt = new Intl.DateTimeFormat('en-GB', { day: 'numeric', month: 'short', year: 'numeric', hour: '2-digit', minute: '2-digit' });

export function AttemptsTable({ attempts }: { attempts: MyAttemptRow[] }) {
  if (attempts.length === 0) {
    return (
      <EmptyState title="No attempts yet">
        Open an assigned scenario or a practice bench from the <Link to={paths.bench.href()} className="underline">bench list</Link>.
      </EmptyState>
    );
  }
  return (
    <div className="overflow-x-auto rounded-xl bg-white shadow-sm ring-1 ring-slate-200">
      <table className="stack-table w-full text-left text-sm" aria-label="Your attempts">
        <thead className="border-b border-slate-200 text-xs uppercase tracking-wide text-slate-600">
          <tr>
            <th className="px-4 py-2 font-medium">Scenario</th>
            <th className="px-4 py-2 font-medium">Started</th>
            <th className="px-4 py-2 font-medium">Time to diagnosis</th>
            <th className="px-4 py-2 text-right font-medium">Grade</th>
            <th className="px-4 py-2 font-medium">Status</th>
            <th className="px-4 py-2">
              <span className="sr-only">Open</span>
            </th>
          </tr>
        </thead>
        <tbody className="divide-y divide-slate-100">
          {attempts.map((a) => (
            <tr key={a.id}>
              <td className="px-4 py-2">
                <span className="font-medium text-slate-900">{a.scenarioTitle}</span>
                <span className="block text-xs text-slate-500">{a.mode === 'practice' ? 'Practice' : (a.assignmentTitle ?? 'Assigned')}</span>
              </td>
              <td data-label="Started" className="px-4 py-2 text-slate-600">{dateFmt.format(new Date(a.startedAt))}</td>
              <td data-label="Time to diagnosis" className="px-4 py-2 font-mono text-slate-600">{formatDuration(a.timeToDiagnosisMs)}</td>
              <td data-label="Grade" className="px-4 py-2 text-right font-mono">{a.grade === null ? (a.mode === 'practice' && a.status === 'submitted' ? 'ungraded' : '—') : Math.round(a.grade)}</td>
              <td data-label="Status" className="px-4 py-2">
                <span className={`rounded-full px-2 py-0.5 text-xs font-medium ${a.status === 'submitted' ? 'bg-slate-100 text-slate-700' : 'bg-live-50 text-live-700'}`}>
                  {a.status === 'submitted' ? 'Submitted' : 'In progress'}
                </span>
              </td>
              <td className="px-4 py-2 text-right">
                <span className="flex justify-end gap-3 max-sm:justify-start max-sm:pt-1">
                  <Link to={paths.benchAttempt.href(a.id)} className="font-medium text-slate-900 underline underline-offset-2">
                    {a.status === 'submitted' ? 'Open result' : 'Continue'}
                    <span className="sr-only"> {a.scenarioTitle}</span>
                  </Link>
                  {a.status === 'submitted' && (
                    <Link to={paths.replay.href(a.id)} className="font-medium text-slate-600 underline underline-offset-2">
                      Replay<span className="sr-only"> {a.scenarioTitle}</span>
                    </Link>
                  )}
                </span>
              </td>
            </tr>
          ))}
        </tbody>
      </table>
    </div>
  );
}
