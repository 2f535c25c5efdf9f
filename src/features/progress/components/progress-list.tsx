/**
 * A student's progress: the trend of their graded attempts (grade over time,
 * each one a link to its replay), then the competencies, signed off or not,
 * with the attempts behind each and whether its verdict was right.
 */
import { Link } from 'react-router-dom';
import { scaleLinear } from 'd3-scale';
import { line } from 'd3-shape';
import type { ProgressResponse } from '../../../../shared/api/compare.ts';
import { paths } from '../../../config/paths.ts';

const date = (iso: string) => new Date(iso).toLocaleDateString(undefined, { year: 'numeric', month: 'short', day: 'numeric' });
const minutes = (ms: number | null) => (ms === null ? '—' : `${(ms / 60_000).toFixed(1)} min`);

type Graded = ProgressResponse['attempts'][number];

/** In words: how the grades moved from the first graded attempt to the latest. */
export function trendText(attempts: readonly Graded[]): string {
  if (attempts.length === 0) return 'No graded attempts yet.';
  const last = Math.round(attempts.at(-1)!.grade);
  if (attempts.length === 1) return `One graded attempt so far: ${last} / 100.`;
  const first = Math.round(attempts[0]!.grade);
  const recent = attempts.slice(-3).map((a) => Math.round(a.grade));
  const change = last - first;
  const way = change > 0 ? `up ${change} points` : change < 0 ? `down ${-change} points` : 'level';
  return `${attempts.length} graded attempts: ${way} from the first (${first}) to the latest (${last}); the last ${recent.length}: ${recent.join(', ')}.`;
}

const W = 560;
const H = 150;
const M = { top: 12, right: 16, bottom: 22, left: 34 };

function GradeChart({ attempts }: { attempts: readonly Graded[] }) {
  const x = scaleLinear()
    .domain([0, Math.max(1, attempts.length - 1)])
    .range([M.left, W - M.right]);
  const y = scaleLinear().domain([0, 100]).range([H - M.bottom, M.top]);
  const path = line<Graded>()
    .x((_, i) => x(i))
    .y((a) => y(a.grade))(attempts as Graded[]);
  return (
    <svg viewBox={`0 0 ${W} ${H}`} className="h-auto w-full max-w-2xl" role="img" aria-label={`Grades of the graded attempts, oldest first: ${attempts.map((a) => Math.round(a.grade)).join(', ')}`}>
      {[0, 50, 100].map((g) => (
        <g key={g}>
          <line x1={M.left} x2={W - M.right} y1={y(g)} y2={y(g)} className="stroke-slate-200" />
          <text x={M.left - 6} y={y(g) + 4} textAnchor="end" className="fill-slate-600 text-[11px]">
            {g}
          </text>
        </g>
      ))}
      <path d={path ?? ''} fill="none" className="stroke-live-600" strokeWidth={2} />
      {attempts.map((a, i) => (
        <Link key={a.attemptId} to={paths.replay.href(a.attemptId)} aria-label={`${a.scenarioTitle}, grade ${Math.round(a.grade)}: open the replay`}>
          <circle cx={x(i)} cy={y(a.grade)} r={12} fill="transparent" />
          <circle cx={x(i)} cy={y(a.grade)} r={5} className={a.faultCorrect === false ? 'fill-warn-500' : 'fill-live-600'} />
        </Link>
      ))}
      <text x={M.left} y={H - 4} className="fill-slate-600 text-[11px]">
        oldest
      </text>
      <text x={W - M.right} y={H - 4} textAnchor="end" className="fill-slate-600 text-[11px]">
        latest
      </text>
    </svg>
  );
}

export function ProgressList({ progress }: { progress: ProgressResponse }) {
  const signed = progress.competencies.filter((c) => c.signOff).length;
  const graded = progress.attempts;
  return (
    <div className="space-y-8">
      <section aria-labelledby="trend-heading" className="rounded-xl bg-white p-4 shadow-sm ring-1 ring-slate-200">
        <h2 id="trend-heading" className="text-base font-semibold text-slate-900">
          Trend
        </h2>
        <p className="mt-1 text-sm text-slate-700" data-testid="progress-trend">
          {trendText(graded)}
        </p>
        {graded.length > 1 && <GradeChart attempts={graded} />}
        {graded.length > 0 && (
          <ol className="mt-3 divide-y divide-slate-100 text-sm" aria-label="Graded attempts, oldest first">
            {graded.map((a) => (
              <li key={a.attemptId} className="flex flex-wrap items-baseline gap-x-3 gap-y-0.5 py-1.5">
                <span className="font-mono font-semibold text-slate-900">{Math.round(a.grade)}</span>
                <span className="min-w-0 flex-1 text-slate-800">{a.scenarioTitle}</span>
                <span className="text-xs text-slate-600">
                  {a.submittedAt ? date(a.submittedAt) : ''} · diagnosed in {minutes(a.timeToDiagnosisMs)}
                  {a.faultCorrect === null ? '' : a.faultCorrect ? ' · fault right' : ' · fault missed'}
                </span>
                <Link to={paths.replay.href(a.attemptId)} className="font-medium text-live-700 underline underline-offset-2">
                  Replay<span className="sr-only"> {a.scenarioTitle}</span>
                </Link>
              </li>
            ))}
          </ol>
        )}
      </section>
      <section aria-labelledby="competencies-heading">
        <h2 id="competencies-heading" className="text-base font-semibold text-slate-900">
          Competencies
        </h2>
        <p className="mb-3 text-sm text-slate-600" role="status">
          {signed} of {progress.competencies.length} competencies signed off.
        </p>
        <ul className="grid gap-3 md:grid-cols-2" aria-label="Competencies">
          {progress.competencies.map((c) => (
            <li key={c.competency} className={`rounded-xl bg-white p-4 shadow-sm ring-1 ${c.signOff ? 'ring-live-300' : 'ring-slate-200'}`}>
              <div className="flex items-start justify-between gap-3">
                <h3 className="font-semibold text-slate-900">{c.label}</h3>
                {c.signOff ? (
                  <span className="shrink-0 rounded-full bg-live-50 px-2 py-0.5 text-xs font-medium text-live-700">Signed off</span>
                ) : (
                  <span className="shrink-0 rounded-full bg-stone-100 px-2 py-0.5 text-xs font-medium text-slate-700">Not yet</span>
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
              <p className="mt-1 text-xs text-slate-600">
                {c.gradedAttempts} graded attempt{c.gradedAttempts === 1 ? '' : 's'} expected this test
                {c.verdicts ? `; ${c.verdictsRight} of ${c.verdicts} verdicts right` : ''}.
              </p>
              {c.evidence.length > 0 && (
                <ol className="mt-2 flex flex-wrap gap-1.5" aria-label={`Attempts behind ${c.label}, oldest first`}>
                  {[...c.evidence].reverse().map((e) => (
                    <li key={e.attemptId}>
                      <Link
                        to={paths.replay.href(e.attemptId)}
                        className={`inline-flex min-h-7 items-center rounded-md px-2 text-xs font-medium ring-1 ${
                          e.verdictOk === true ? 'bg-live-50 text-live-700 ring-live-500/40' : e.verdictOk === false ? 'bg-warn-100 text-warn-700 ring-warn-500/40' : 'bg-white text-slate-700 ring-slate-300'
                        }`}
                      >
                        {e.verdictOk === true ? 'Right' : e.verdictOk === false ? 'Wrong' : 'No verdict'}
                        {e.grade !== null ? ` · ${Math.round(e.grade)}` : ''}
                        <span className="sr-only"> — {e.scenarioTitle}, open the replay</span>
                      </Link>
                    </li>
                  ))}
                </ol>
              )}
            </li>
          ))}
        </ul>
      </section>
    </div>
  );
}
