/**
 * The graded result: the grade and how it was made (the weights and each
 * part's points), whether it is verified, each reading with what the bench
 * showed and whether it was inside its test's set-up (and if not, why), the
 * verdicts, the fault, what the re-run shows of the work, and feedback. A
 * result the student may not see yet says when it will show.
 */
import { Link } from 'react-router-dom';
import type { AttemptResult } from '../../../../shared/api/attempts.ts';
import { shownWithUnit } from '../../../../shared/meter-display.ts';
import { diagnosisLabel } from '../../../../shared/scenario.ts';
import type { DiagnosticTest } from '../../../../sim/faults.ts';
import { paths } from '../../../config/paths.ts';
import { OutputCurveChart } from '../../../components/output-curve-chart.tsx';

const mmss = (ms: number) => `${Math.floor(ms / 60_000)} min ${Math.floor((ms % 60_000) / 1000)} s`;
const when = (iso: string) => new Date(iso).toLocaleString('en-GB', { dateStyle: 'medium', timeStyle: 'short' });

function Mark({ ok, yes = 'OK', no = 'Check' }: { ok: boolean | null; yes?: string; no?: string }) {
  if (ok === null) return <span className="inline-block rounded bg-slate-100 px-1.5 py-0.5 text-xs font-semibold text-slate-500">Hidden</span>;
  return <span className={`inline-block rounded px-1.5 py-0.5 text-xs font-semibold ${ok ? 'bg-live-50 text-live-700' : 'bg-warn-100 text-warn-700'}`}>{ok ? yes : no}</span>;
}

const PART_LABELS = { evidence: 'Evidence', verdicts: 'Verdicts', fault: 'Fault named', process: 'Process' } as const;

export function AttemptResultView({ result, testLabel, ratedA, attemptId }: { result: AttemptResult; testLabel: (t: DiagnosticTest) => string; ratedA: number; attemptId?: number }) {
  const hidden = result.hidden;
  return (
    <div className="space-y-6" data-testid="attempt-result">
      {hidden && (
        <p className="rounded-md bg-stone-100 px-3 py-2 text-sm text-slate-700" data-testid="result-hidden">
          {hidden.reason === 'practice'
            ? 'Practice results show what the bench showed and how each reading was taken. The fault and the right verdicts are not revealed, so the scenario can be practised again.'
            : `This assignment shows the grade, the fault and the values when it closes${hidden.until ? `, ${when(hidden.until)}` : ''}. Until then you see how each reading was taken.`}
        </p>
      )}
      <div className="flex flex-wrap items-end gap-6">
        <div>
          <p className="text-xs font-medium uppercase tracking-wide text-slate-600">Grade</p>
          <p className="text-4xl font-semibold text-slate-900" data-testid="result-grade">
            {result.grade === null ? (hidden?.reason === 'until-close' ? 'Shown at close' : 'Practice') : `${Math.round(result.grade)} / 100`}
          </p>
        </div>
        {result.verified !== null && (
          <p className={`rounded-full px-3 py-1 text-sm font-medium ${result.verified ? 'bg-live-50 text-live-700' : 'bg-warn-100 text-warn-700'}`} data-testid="result-verified">
            {result.verified ? 'Verified: every expected test has evidence the bench bears out' : 'Not verified: evidence is missing or a reading did not match the bench'}
          </p>
        )}
        <p className="text-sm text-slate-600">Time to diagnosis: {mmss(result.timeToDiagnosisMs)}</p>
        {result.hints && result.hints.opened > 0 && (
          <p className="text-sm text-slate-600" data-testid="result-hints">
            Hints opened: {result.hints.opened}
            {result.scoring?.hintDeduction ? ` (−${result.scoring.hintDeduction} points)` : ''}
          </p>
        )}
        {attemptId !== undefined && (
          <Link to={paths.replay.href(attemptId)} className="text-sm font-medium text-live-700 underline">
            Replay this attempt
          </Link>
        )}
      </div>

      {result.scoring && (
        <section aria-label="How the grade was made">
          <h3 className="mb-1 text-sm font-semibold text-slate-900">How the grade was made</h3>
          <dl className="grid grid-cols-2 gap-2 text-sm sm:grid-cols-4" data-testid="result-scoring">
            {(Object.keys(PART_LABELS) as (keyof typeof PART_LABELS)[]).map((k) => (
              <div key={k} className="rounded-md bg-stone-100 px-3 py-2">
                <dt className="text-xs text-slate-600">{PART_LABELS[k]}</dt>
                <dd className="font-mono font-semibold text-slate-900">
                  {result.scoring!.points[k]} / {result.scoring!.weights[k]}
                </dd>
              </div>
            ))}
          </dl>
          <p className="mt-1 text-xs text-slate-500">
            Evidence: a reading inside each expected test’s set-up whose value is what the bench showed. Verdicts count for tests with evidence; the fault named and the
            process count in proportion to the tests with evidence; each process mistake costs {result.scoring.processDeduction} points
            {result.hints && result.hints.pointsEach > 0 ? `, and each hint opened ${result.hints.pointsEach}` : ''}.
          </p>
        </section>
      )}

      <section>
        <h3 className="mb-1 text-sm font-semibold text-slate-900">Fault</h3>
        <p className="text-sm text-slate-700" data-testid="result-fault">
          {result.fault.actual === null ? (
            <>You named: {diagnosisLabel(result.fault.given)}. The car’s fault is not shown here.</>
          ) : (
            <>
              <Mark ok={result.fault.ok} /> The car had: <strong>{result.fault.labels.join('; ')}</strong>
            </>
          )}
        </p>
      </section>

      {result.readings.length > 0 && (
        <section>
          <h3 className="mb-1 text-sm font-semibold text-slate-900">Readings</h3>
          <table className="w-full text-left text-sm" aria-label="Readings and their checks">
            <thead className="text-xs uppercase tracking-wide text-slate-600">
              <tr>
                <th className="py-1 font-medium">Test</th>
                <th className="py-1 text-right font-medium">You recorded</th>
                <th className="py-1 text-right font-medium">The bench showed</th>
                <th className="py-1 pl-3 font-medium">Counts?</th>
              </tr>
            </thead>
            <tbody className="divide-y divide-slate-100">
              {result.readings.map((r) => (
                <tr key={r.id} data-testid="result-reading" data-at-ms={r.atMs}>
                  <td className="py-1.5 text-slate-700">{testLabel(r.test)}</td>
                  <td className="py-1.5 text-right font-mono" data-testid="result-recorded">
                    {shownWithUnit(r.value, r.unit)}
                  </td>
                  <td className="py-1.5 text-right font-mono text-slate-500" data-testid="result-shown">
                    {r.shown === null ? '—' : shownWithUnit(r.shown, r.unit)}
                  </td>
                  <td className="py-1.5 pl-3">
                    <Mark ok={r.evidence ?? (r.inSetup ? null : false)} yes="Evidence" no="No" /> <span className="text-xs text-slate-500">{r.reason}</span>
                  </td>
                </tr>
              ))}
            </tbody>
          </table>
        </section>
      )}

      {result.verdicts.length > 0 && (
        <section>
          <h3 className="mb-1 text-sm font-semibold text-slate-900">Test verdicts</h3>
          <ul className="space-y-1 text-sm">
            {result.verdicts.map((v) => (
              <li key={v.test} className="flex flex-wrap items-center gap-2">
                <Mark ok={v.ok} />
                <span className="text-slate-700">{testLabel(v.test)}:</span>
                <span className="text-slate-600">
                  you said {v.given === null ? 'nothing' : v.given ? 'pass' : 'fail'}
                  {v.correct === null ? '' : `; it should ${v.correct ? 'pass' : 'fail'}`}
                  {v.evidenced ? '' : ' (no evidence for this test, so its verdict earns nothing)'}
                </span>
              </li>
            ))}
          </ul>
        </section>
      )}

      {result.mistakes.length > 0 && (
        <section>
          <h3 className="mb-1 text-sm font-semibold text-slate-900">On the bench</h3>
          <ul className="list-disc space-y-1 pl-5 text-sm text-warn-700">
            {result.mistakes.map((m, i) => (
              <li key={i}>
                {m.message} <span className="text-xs text-slate-500">at {mmss(m.atMs)}{m.process ? ' · costs process points' : ''}</span>
              </li>
            ))}
          </ul>
        </section>
      )}

      {result.flags.length > 0 && (
        <section>
          <h3 className="mb-1 text-sm font-semibold text-slate-900">Flagged for the instructor</h3>
          <ul className="list-disc space-y-1 pl-5 text-sm text-stop-700" data-testid="result-flags">
            {result.flags.map((f, i) => (
              <li key={i}>{f.message}</li>
            ))}
          </ul>
        </section>
      )}

      {result.feedback.length > 0 && (
        <section>
          <h3 className="mb-1 text-sm font-semibold text-slate-900">Feedback</h3>
          <ul className="list-disc space-y-1 pl-5 text-sm text-slate-700">
            {result.feedback.map((f, i) => (
              <li key={i}>{f}</li>
            ))}
          </ul>
        </section>
      )}

      {result.outputCurve && (
        <section>
          <h3 className="mb-1 text-sm font-semibold text-slate-900">Output curve of the fitted unit</h3>
          <p className="mb-2 text-xs text-slate-500">Solid: the unit on the car. Dashed: a healthy unit of the specified rating. Dots: your output readings that count as evidence.</p>
          <div className="max-w-2xl">
            <OutputCurveChart fitted={result.outputCurve.fitted} healthy={result.outputCurve.healthy} measured={result.measuredPoints ?? []} ratedA={ratedA} />
          </div>
        </section>
      )}
    </div>
  );
}
