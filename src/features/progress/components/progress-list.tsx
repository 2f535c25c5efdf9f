/** A student's competencies: signed off or not, with the graded attempts that count as evidence. */
import { Link } from 'react-router-dom';
import type { ProgressResponse } from '../../../../shared/api/compare.ts';
import { paths } from '../../../config/paths.ts';

const date = (iso: string) => new Date(iso).toLocaleDateString(undefined, { year: 'numeric', month: 'short', day: 'numeric' });

export function ProgressList({ progress }: { progress: ProgressResponse }) {
  const signed = progress.competencies.filter((c) => c.signOff).length;
  return (
    <div>
      <p className="mb-4 text-sm text-slate-600" role="status">
        {signed} of {progress.competencies.length} competencies signed off.
      </p>
      <ul className="grid gap-3 md:grid-cols-2" aria-label="Competencies">
        {progress.competencies.map((c) => (
          <li key={c.competency} className={`rounded-xl bg-white p-4 shadow-sm ring-1 ${c.signOff ? 'ring-live-300' : 'ring-slate-200'}`}>
            <div className="flex items-start justify-between gap-3">
              <h2 className="font-semibold text-slate-900">{c.label}</h2>
              {c.signOff ? (
                <span className="shrink-0 rounded-full bg-live-50 px-2 py-0.5 text-xs font-medium text-live-700">Signed off</span>
              ) : (
                <span className="shrink-0 rounded-full bg-stone-100 px-2 py-0.5 text-xs font-medium text-slate-600">Not yet</span>
              )}
            </div>
            {c.signOff && (
              <p className="mt-1 text-sm text-slate-700">
                {c.signOff.signedByName ?? 'An instructor'} on {date(c.signOff.createdAt)}
                {c.signOff.note ? `: “${c.signOff.note}”` : ''}
                {c.signOff.attemptId !== null && (
                  <>
                    {' · '}
                    <Link to={paths.replay.href(c.signOff.attemptId)} className="text-live-700 underline underline-offset-2">
                      the attempt
                    </Link>
                  </>
                )}
              </p>
            )}
            <p className="mt-1 text-xs text-slate-500">
              {c.gradedAttempts} graded attempt{c.gradedAttempts === 1 ? '' : 's'} expected this test
              {c.verdicts ? `; ${c.verdictsRight} of ${c.verdicts} verdicts right` : ''}.
            </p>
          </li>
        ))}
      </ul>
    </div>
  );
}
