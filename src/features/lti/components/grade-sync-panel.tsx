import type { GradeSyncRow } from '../../../../shared/api/lti.ts';
import { Button } from '../../../components/ui/button.tsx';
import { ErrorState, Panel, Spinner } from '../../../components/ui/states.tsx';
import { useGradeSync } from '../api/get-grade-sync.ts';
import { useResendScore } from '../api/resend-score.ts';

const badge: Record<GradeSyncRow['status'], string> = {
  sent: 'bg-live-100 text-live-700',
  pending: 'bg-warn-100 text-warn-700',
  failed: 'bg-stop-100 text-stop-700',
};

function statusText(r: GradeSyncRow): string {
  if (r.status === 'sent') return `Sent ${r.sentAt ? new Date(r.sentAt).toLocaleString() : ''}`;
  if (r.status === 'failed') return 'Not sent: gave up';
  return r.tries === 0 ? 'Waiting to be sent' : `Retrying (${r.tries} ${r.tries === 1 ? 'try' : 'tries'} so far; next ${r.nextTryAt ? new Date(r.nextTryAt).toLocaleTimeString() : 'soon'})`;
}

function Row({ row, assignmentId }: { row: GradeSyncRow; assignmentId: number }) {
  const resend = useResendScore();
  return (
    <tr data-testid="grade-sync-row">
      <td className="px-3 py-2 font-medium">{row.studentName}</td>
      <td className="px-3 py-2 font-mono">{row.scoreGiven === null ? '—' : `${Math.round(row.scoreGiven)} / 100`}</td>
      <td className="px-3 py-2">
        <span className={`rounded px-1.5 py-0.5 text-xs font-medium ${badge[row.status]}`} data-testid="grade-sync-status">
          {row.status}
        </span>{' '}
        <span className="text-sm text-slate-600">{statusText(row)}</span>
        {row.lastError && row.status !== 'sent' && <p className="mt-1 max-w-md break-words text-xs text-slate-500">{row.lastError}</p>}
      </td>
      <td className="px-3 py-2 text-right">
        <Button size="sm" variant="ghost" disabled={resend.isPending} onClick={() => resend.mutate({ id: row.id, assignmentId })}>
          Resend<span className="sr-only"> the grade of {row.studentName}</span>
        </Button>
      </td>
    </tr>
  );
}

/** Each grade of an assignment launched from a learning platform, as the platform has it or will: sent, retrying, or given up. */
export function GradeSyncPanel({ assignmentId }: { assignmentId: number }) {
  const q = useGradeSync(assignmentId);
  if (q.isPending) return <Spinner label="Loading the grades sent to the platform" />;
  if (q.isError) return <ErrorState error={q.error} retry={() => void q.refetch()} />;
  if (!q.data.linked) return null;
  return (
    <Panel title={`Grades sent to ${q.data.platformName ?? 'the learning platform'}`}>
      {q.data.rows.length === 0 ? (
        <p className="text-sm text-slate-600">No graded attempt of a student who came from the platform yet.</p>
      ) : (
        <table className="w-full text-left text-sm">
          <thead className="text-xs uppercase tracking-wide text-slate-500">
            <tr>
              <th className="px-3 py-2">Student</th>
              <th className="px-3 py-2">Score</th>
              <th className="px-3 py-2">State</th>
              <th className="px-3 py-2">
                <span className="sr-only">Actions</span>
              </th>
            </tr>
          </thead>
          <tbody className="divide-y divide-slate-100">
            {q.data.rows.map((r) => (
              <Row key={r.id} row={r} assignmentId={assignmentId} />
            ))}
          </tbody>
        </table>
      )}
    </Panel>
  );
}
