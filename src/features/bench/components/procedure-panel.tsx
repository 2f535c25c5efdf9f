/** One tab per test: the steps, the scenario's criterion and the cautions. */
import type { DiagnosticTest } from '../../../../sim/faults.ts';
import type { PassRules } from '../../../../shared/scenario.ts';
import { useBenchUi } from '../stores/bench-ui-store.ts';
import { DEFER_NOTE, procedureFor } from './procedure-content.ts';

const SHORT: Record<DiagnosticTest, string> = {
  'battery-ocv': 'State of charge',
  'battery-load': 'Load test',
  'regulated-voltage': 'Regulated V',
  output: 'Output',
  'voltage-drop-positive': 'Drop +',
  'voltage-drop-ground': 'Drop −',
  ripple: 'Ripple',
  'key-off-draw': 'Key-off draw',
  cranking: 'Cranking',
};

export function ProcedurePanel({ tests, rules, ratedA, cca }: { tests: DiagnosticTest[]; rules: PassRules; ratedA: number; cca: number }) {
  const open = useBenchUi((s) => s.procedure);
  const openProcedure = useBenchUi((s) => s.openProcedure);
  const current = tests.includes(open) ? open : (tests[0] ?? 'battery-ocv');
  const p = procedureFor(current, rules, ratedA, cca);
  return (
    <div>
      <div role="tablist" aria-label="Test procedures" className="flex flex-wrap gap-1 border-b border-slate-200 pb-2">
        {tests.map((t) => (
          <button
            key={t}
            type="button"
            role="tab"
            id={`proc-tab-${t}`}
            aria-selected={t === current}
            aria-controls="procedure-body"
            onClick={() => openProcedure(t)}
            className={`rounded-md px-2.5 py-1 text-xs font-medium ${t === current ? 'bg-slate-900 text-white' : 'text-slate-600 hover:bg-slate-100'}`}
          >
            {SHORT[t]}
          </button>
        ))}
      </div>
      <div role="tabpanel" id="procedure-body" aria-labelledby={`proc-tab-${current}`} className="space-y-3 pt-3 text-sm">
        <h3 className="font-semibold text-slate-900">{p.title}</h3>
        <ol className="list-decimal space-y-1 pl-5 text-slate-700">
          {p.steps.map((s) => (
            <li key={s}>{s}</li>
          ))}
        </ol>
        <p className="rounded-md bg-stone-100 px-3 py-2 text-slate-700">
          <span className="font-medium text-slate-900">Criterion: </span>
          {p.criterion}
        </p>
        <ul className="space-y-1 text-xs text-warn-700">
          {p.cautions.map((c) => (
            <li key={c} className="flex gap-1.5">
              <span aria-hidden="true">▲</span>
              <span>{c}</span>
            </li>
          ))}
        </ul>
        <p className="text-xs text-slate-500">{DEFER_NOTE}</p>
      </div>
    </div>
  );
}
