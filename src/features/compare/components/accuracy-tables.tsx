/** Accuracy of the class per actual fault and per test. */
import type { InstructorCompare } from '../../../../shared/api/compare.ts';

const pct = (n: number, d: number) => (d === 0 ? '—' : `${Math.round((100 * n) / d)} %`);

function Bar({ n, d }: { n: number; d: number }) {
  const w = d === 0 ? 0 : (100 * n) / d;
  return (
    <span className="inline-block h-2 w-24 overflow-hidden rounded bg-slate-200 align-middle" aria-hidden="true">
      <span className="block h-full bg-live-500" style={{ width: `${w}%` }} />
    </span>
  );
}

export function AccuracyTables({ byFault, byTest }: { byFault: InstructorCompare['accuracyByFault']; byTest: InstructorCompare['accuracyByTest'] }) {
  return (
    <div className="grid gap-4 md:grid-cols-2">
      <table className="text-sm">
        <caption className="mb-2 text-left font-semibold text-slate-700">Accuracy per fault</caption>
        <thead className="text-left text-slate-500">
          <tr>
            <th scope="col" className="py-1 pr-3 font-medium">Actual fault</th>
            <th scope="col" className="py-1 pr-3 font-medium">Named</th>
            <th scope="col" className="py-1 font-medium">
              <span className="sr-only">Share</span>
            </th>
          </tr>
        </thead>
        <tbody>
          {byFault.map((f) => (
            <tr key={f.fault}>
              <td className="py-1 pr-3">{f.label}</td>
              <td className="py-1 pr-3 font-mono">
                {f.named} of {f.attempts} ({pct(f.named, f.attempts)})
              </td>
              <td className="py-1">
                <Bar n={f.named} d={f.attempts} />
              </td>
            </tr>
          ))}
        </tbody>
      </table>
      <table className="text-sm">
        <caption className="mb-2 text-left font-semibold text-slate-700">Accuracy per test</caption>
        <thead className="text-left text-slate-500">
          <tr>
            <th scope="col" className="py-1 pr-3 font-medium">Test</th>
            <th scope="col" className="py-1 pr-3 font-medium">Right verdicts</th>
            <th scope="col" className="py-1 font-medium">
              <span className="sr-only">Share</span>
            </th>
          </tr>
        </thead>
        <tbody>
          {byTest.map((t) => (
            <tr key={t.test}>
              <td className="py-1 pr-3">{t.label}</td>
              <td className="py-1 pr-3 font-mono">
                {t.right} of {t.verdicts} ({pct(t.right, t.verdicts)})
              </td>
              <td className="py-1">
                <Bar n={t.right} d={t.verdicts} />
              </td>
            </tr>
          ))}
        </tbody>
      </table>
    </div>
  );
}
