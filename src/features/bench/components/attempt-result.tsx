/** The graded result: grade, whether the readings were verified, each check, the fault revealed and feedback. */
import type { AttemptResult } from '../../../../shared/api/attempts.ts';
import type { DiagnosticTest } from '../../../../sim/faults.ts';
import { OutputCurveChart } from './output-curve-chart.tsx';

const mmss = (ms: number) => `${Math.floor(ms / 60_000)} min ${Math.floor((ms % 60_000) / 1000)} s`;

function Mark({ ok }: { ok: boolean }) {
  return <span className={`inline-block rounded px-1.5 py-0.5 text-xs font-semibold ${ok ? 'bg-live-50 text-live-700' : 'bg-warn-100 text-warn-700'}`}>{ok ? 'OK' : 'Check'}</span>;
}

export function AttemptResultView({ result, testLabel, ratedA }: { result: AttemptResult; testLabel: (t: DiagnosticTest) => string; ratedA: number }) {
  return (
    <div className="space-y-6" data-testid="attempt-result">
      <div className="flex flex-wrap items-end gap-6">
        <div>
          <p className="text-xs font-medium uppercase tracking-wide text-slate-600">Grade</p>
          <p className="text-4xl font-semibold text-slate-900" data-testid="result-grade">
            {result.grade === null ? 'Practice' : `${Math.round(result.grade)} / 100`}
          </p>
        </div>
        <p className={`rounded-full px-3 py-1 text-sm font-medium ${result.verified ? 'bg-live-50 text-live-700' : 'bg-warn-100 text-warn-700'}`} data-testid="result-verified">
          {result.verified ? 'Readings verified against the bench' : 'Some readings did not match the bench'}
        </p>
        <p className="text-sm text-slate-600">Time to diagnosis: {mmss(result.timeToDiagnosisMs)}</p>
      </div>

      <section>
        <h3 className="mb-1 text-sm font-semibold text-slate-900">Fault</h3>
        <p className="text-sm text-slate-700" data-testid="result-fault">
          <Mark ok={result.fault.ok} /> The car had: <strong>{result.fault.labels.join('; ')}</strong>
        </p>
      </section>

      {result.readings.length > 0 && (
        <section>
          <h3 className="mb-1 text-sm font-semibold text-slate-900">Readings</h3>
          <table className="w-full text-left text-sm">
            <thead className="text-xs uppercase tracking-wide text-slate-600">
              <tr>
                <th className="py-1 font-medium">Test</th>
                <th className="py-1 text-right font-medium">You wrote</th>
                <th className="py-1 text-right font-medium">Bench showed</th>
                <th className="py-1 pl-3 font-medium">Check</th>
              </tr>
            </thead>
            <tbody className="divide-y divide-slate-100">
              {result.readings.map((r) => (
                <tr key={r.id}>
                  <td className="py-1.5 text-slate-700">{testLabel(r.test)}</td>
                  <td className="py-1.5 text-right font-mono">
                    {r.value} {r.unit}
                  </td>
                  <td className="py-1.5 text-right font-mono text-slate-500">{r.expectedValue === null ? '—' : `${Number(r.expectedValue.toFixed(3))} ${r.unit}`}</td>
                  <td className="py-1.5 pl-3">
                    <Mark ok={r.ok} /> <span className="text-xs text-slate-500">{r.message}</span>
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
              <li key={v.test} className="flex items-center gap-2">
                <Mark ok={v.ok} />
                <span className="text-slate-700">{testLabel(v.test)}:</span>
                <span className="text-slate-600">
                  you said {v.given === null ? 'nothing' : v.given ? 'pass' : 'fail'}; it should {v.correct ? 'pass' : 'fail'}
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
                {m.message} <span className="text-xs text-slate-500">at {mmss(m.atMs)}</span>
              </li>
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
          <p className="mb-2 text-xs text-slate-500">Solid: the unit on the car. Dashed: a healthy unit of the specified rating. Dots: your output readings.</p>
          <div className="max-w-2xl">
          <OutputCurveChart fitted={result.outputCurve.fitted} healthy={result.outputCurve.healthy} measured={result.measuredPoints ?? []} ratedA={ratedA} />
          </div>
        </section>
      )}
    </div>
  );
}
