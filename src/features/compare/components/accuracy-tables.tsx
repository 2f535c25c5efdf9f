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

interface AccuracyRow {
  key: string;
  label: string;
  right: number;
  of: number;
}

function AccuracyTable({ caption, subject, measure, rows }: { caption: string; subject: string; measure: string; rows: AccuracyRow[] }) {
  return (
    <table className="text-sm">
      <caption className="mb-2 text-left font-semibold text-slate-700">{caption}</caption>
      <thead className="text-left text-slate-500">
        <tr>
          <th scope="col" className="py-1 pr-3 font-medium">{subject}</th>
          <th scope="col" className="py-1 pr-3 font-medium">{measure}</th>
          <th scope="col" className="py-1 font-medium">
            <span className="sr-only">Share</span>
          </th>
        </tr>
      </thead>
      <tbody>
        {rows.map((r) => (
          <tr key={r.key}>
            <td className="py-1 pr-3">{r.label}</td>
            <td className="py-1 pr-3 font-mono">
              {r.right} of {r.of} ({pct(r.right, r.of)})
            </td>
            <td className="py-1">
              <Bar n={r.right} d={r.of} />
            </td>
          </tr>
        ))}
      </tbody>
    </table>
  );
}

export function AccuracyTables({ byFault, byTest }: { byFault: InstructorCompare['accuracyByFault']; byTest: InstructorCompare['accuracyByTest'] }) {
  return (
    <div className="grid gap-4 md:grid-cols-2">
      <AccuracyTable
        caption="Accuracy per fault"
        subject="Actual fault"
        measure="Named"
        rows={byFault.map((f) => ({ key: f.fault, label: f.label, right: f.named, of: f.attempts }))}
      />
      <AccuracyTable
        caption="Accuracy per test"
        subject="Test"
        measure="Right verdicts"
        rows={byTest.map((t) => ({ key: t.test, label: t.label, right: t.right, of: t.verdicts }))}
      />
    </div>
  );
}
