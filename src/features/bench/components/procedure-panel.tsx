/** One tab per test (the arrow keys move between them): the steps, the scenario's criterion and the cautions. */
import type { ReactNode } from 'react';
import type { DiagnosticTest } from '../../../../sim/faults.ts';
import type { PassRules } from '../../../../shared/scenario.ts';
import { TabList, TabPanel, useTabsId } from '../../../components/ui/tabs.tsx';
import { useBenchUi } from '../stores/bench-ui-store.ts';
import { DEFER_NOTE, procedureFor } from './procedure-content.ts';

export const SHORT_TEST_NAMES: Record<DiagnosticTest, string> = {
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

/** The test the procedure shows: the one opened, if the scenario offers it. */
export function useOpenTest(tests: readonly DiagnosticTest[]): DiagnosticTest {
  const open = useBenchUi((s) => s.procedure);
  return tests.includes(open) ? open : (tests[0] ?? 'battery-ocv');
}

function TestProcedure({ test, rules, ratedA, cca, footer }: { test: DiagnosticTest; rules: PassRules; ratedA: number; cca: number; footer?: ReactNode }) {
  const p = procedureFor(test, rules, ratedA, cca);
  return (
    <>
      <h3 className="font-semibold text-slate-900" data-testid="procedure-title">
        {p.title}
      </h3>
      <ol className="list-decimal space-y-1 pl-5 text-slate-700" aria-label="Steps">
        {p.steps.map((s) => (
          <li key={s}>{s}</li>
        ))}
      </ol>
      <p className="rounded-md bg-stone-100 px-3 py-2 text-slate-700">
        <span className="font-medium text-slate-900">Criterion: </span>
        {p.criterion}
      </p>
      <ul className="space-y-1 text-xs text-warn-700" aria-label="Cautions">
        {p.cautions.map((c) => (
          <li key={c} className="flex gap-1.5">
            <span aria-hidden="true">▲</span>
            <span>{c}</span>
          </li>
        ))}
      </ul>
      {footer}
      <p className="text-xs text-slate-600">{DEFER_NOTE}</p>
    </>
  );
}

export function ProcedurePanel({ tests, rules, ratedA, cca, footer }: { tests: DiagnosticTest[]; rules: PassRules; ratedA: number; cca: number; footer?: ReactNode }) {
  const openProcedure = useBenchUi((s) => s.openProcedure);
  const current = useOpenTest(tests);
  const idPrefix = useTabsId('procedure');
  return (
    <div>
      <TabList
        label="Test procedures"
        idPrefix={idPrefix}
        items={tests.map((t) => ({ key: t, label: SHORT_TEST_NAMES[t] }))}
        selected={current}
        onSelect={openProcedure}
        className="flex flex-wrap gap-1 border-b border-slate-200 pb-2"
        tabClassName={(on) => `min-h-7 rounded-md px-2 py-1 text-xs font-medium ${on ? 'bg-slate-900 text-white' : 'text-slate-700 hover:bg-slate-100'}`}
      />
      {tests.map((t) => (
        <TabPanel key={t} idPrefix={idPrefix} tabKey={t} selected={current} className="space-y-3 pt-3 text-sm focus-visible:outline-offset-4">
          {t === current && <TestProcedure test={t} rules={rules} ratedA={ratedA} cca={cca} footer={footer} />}
        </TabPanel>
      ))}
    </div>
  );
}
