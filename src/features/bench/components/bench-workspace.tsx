/**
 * The bench as one workspace. On a laptop or a landscape tablet (1024 px and
 * wider) it fills the window below the menu with no page scroll: the reading
 * strip on top; the engine-bay drawing with the key, the assistant's rpm and
 * the load dial under it; beside them the current procedure with the Record
 * action pinned at its foot, and the secondary panels (hook-up, car, readings,
 * charts, diagnosis) as tabs in the same column. On a phone the same parts
 * stack and the page scrolls.
 */
import type { ReactNode } from 'react';
import type { DiagnosticTest } from '../../../../sim/faults.ts';
import type { VehicleParams } from '../../../../sim/params.ts';
import type { BenchScenarioView } from '../../../../shared/api/attempts.ts';
import { TabList, TabPanel, useTabsId } from '../../../components/ui/tabs.tsx';
import { BenchEngineContext } from '../hooks/use-bench.ts';
import type { BenchEngine } from '../stores/bench-engine.ts';
import { SIDE_TABS, useBenchUi, type SideTab } from '../stores/bench-ui-store.ts';
import { BenchAlerts, BenchChips } from './bench-status.tsx';
import { BenchSchematic } from './bench-schematic.tsx';
import { AccessorySwitches, KeySwitch, RpmControl } from './engine-controls.tsx';
import { HookupPanel } from './hookup-panel.tsx';
import { PileControl } from './pile-control.tsx';
import { GENERAL_CAUTIONS } from './procedure-content.ts';
import { ProcedurePanel } from './procedure-panel.tsx';
import { ReadingStrip } from './reading-strip.tsx';
import { RippleScope } from './ripple-scope.tsx';
import { StripChart } from './strip-chart.tsx';
import { BenchClock, TimeControls } from './time-controls.tsx';

const TAB_LABELS: Record<SideTab, string> = {
  procedure: 'Procedure',
  hookup: 'Hook-up',
  car: 'Car',
  readings: 'Readings',
  charts: 'Charts',
  diagnose: 'Diagnose',
};

export interface BenchWorkspaceProps {
  engine: BenchEngine;
  scenario: BenchScenarioView;
  vehicle: VehicleParams;
  /** Words under the title: assigned, practice, or the instructor's try-out. */
  modeText: string;
  /** The connection indicator (a try-out has none). */
  status?: ReactNode;
  /** Shown first in the procedure panel's foot (the scenario's hints). */
  procedureFooter?: ReactNode;
  readingCount: number;
  readings: ReactNode;
  recordBar: ReactNode;
  charts?: ReactNode;
  diagnose: ReactNode;
}

function CarPanel({ scenario, modeText }: { scenario: BenchScenarioView; modeText: string }) {
  const v = scenario.vehicle;
  return (
    <div className="space-y-4 text-sm">
      <section aria-labelledby="job-heading">
        <h3 id="job-heading" className="font-semibold text-slate-900">
          The customer says
        </h3>
        <p className="mt-1 text-slate-700">{scenario.summary}</p>
      </section>
      <section aria-labelledby="car-heading">
        <h3 id="car-heading" className="font-semibold text-slate-900">
          The car
        </h3>
        <dl className="mt-1 grid grid-cols-[auto_1fr] gap-x-3 gap-y-0.5 text-slate-700">
          <dt className="text-slate-600">Vehicle</dt>
          <dd>{v.name}</dd>
          <dt className="text-slate-600">Engine</dt>
          <dd>{v.engineDescription}</dd>
          <dt className="text-slate-600">Alternator</dt>
          <dd>rated {v.alternatorRatedA} A, pulley {v.pulleyRatio}:1</dd>
          <dt className="text-slate-600">Battery</dt>
          <dd>
            {v.batteryCca} CCA, {v.batteryCapacityAh} Ah
          </dd>
          <dt className="text-slate-600">Run</dt>
          <dd>{modeText}</dd>
        </dl>
      </section>
      <section aria-labelledby="switches-heading">
        <h3 id="switches-heading" className="mb-1.5 font-semibold text-slate-900">
          Accessory switches
        </h3>
        <AccessorySwitches accessories={scenario.vehicle.accessories} />
      </section>
      <aside aria-label="Safety on a real car" className="rounded-lg bg-stone-50 p-3 text-xs text-slate-700 ring-1 ring-slate-200">
        <p className="mb-1 font-semibold text-slate-800">Safety on a real car</p>
        <ul className="list-disc space-y-0.5 pl-4">
          {GENERAL_CAUTIONS.map((c) => (
            <li key={c}>{c}</li>
          ))}
        </ul>
        <p className="mt-1.5">Always work to the vehicle maker’s service information, local codes and licensed practice.</p>
      </aside>
    </div>
  );
}

function ChartsPanel({ extra }: { extra?: ReactNode }) {
  return (
    <div className="space-y-4">
      <section aria-labelledby="history-heading">
        <h3 id="history-heading" className="mb-1 text-sm font-semibold text-slate-900">
          Last minute
        </h3>
        <StripChart />
      </section>
      <section aria-labelledby="ripple-heading">
        <h3 id="ripple-heading" className="mb-1 text-sm font-semibold text-slate-900">
          Ripple
        </h3>
        <RippleScope />
      </section>
      {extra}
    </div>
  );
}

export function BenchWorkspace(p: BenchWorkspaceProps) {
  const tab = useBenchUi((s) => s.sideTab);
  const openTab = useBenchUi((s) => s.openSideTab);
  const idPrefix = useTabsId('bench-side');
  const { scenario, vehicle } = p;
  const tests = scenario.tests.map((t) => t.test) as DiagnosticTest[];
  const tabs = SIDE_TABS.map((k) => ({
    key: k,
    label: k === 'readings' && p.readingCount > 0 ? `${TAB_LABELS[k]} (${p.readingCount})` : TAB_LABELS[k],
  }));
  return (
    <BenchEngineContext.Provider value={p.engine}>
      <div className="flex flex-col gap-2 p-2 max-lg:pb-32 sm:p-3 lg:h-[calc(100dvh-3.5rem-1px)] lg:overflow-hidden" data-testid="bench-workspace">
        <div className="flex flex-wrap items-center gap-x-3 gap-y-1.5">
          <div className="min-w-0 flex-1 basis-64">
            <h1 className="truncate text-lg font-semibold tracking-tight text-slate-900" title={scenario.title}>
              {scenario.title}
            </h1>
            <p className="truncate text-xs text-slate-600">
              {scenario.vehicle.name} · {p.modeText}
            </p>
          </div>
          <div className="flex flex-wrap items-center gap-1.5">
            <BenchChips />
            <BenchClock />
            <TimeControls />
            {p.status}
          </div>
        </div>
        <div className="[contain:layout_paint] will-change-transform max-lg:sticky max-lg:top-0 max-lg:z-20">
          <ReadingStrip />
        </div>
        <div className="grid min-h-0 flex-1 gap-2 lg:grid-cols-[minmax(0,1fr)_21rem] xl:grid-cols-[minmax(0,1fr)_25rem]">
          <div className="flex min-h-0 min-w-0 flex-col gap-2">
            <div className="relative aspect-[1000/540] w-full [contain:strict] lg:aspect-auto lg:min-h-0 lg:flex-1">
              <BenchSchematic accessories={vehicle.loads.accessories} className="absolute inset-0 will-change-transform" />
              <div className="absolute left-2 right-2 top-2">
                <BenchAlerts />
              </div>
            </div>
            <section aria-label="Engine and load controls" className="grid gap-3 rounded-xl [contain:layout_paint] will-change-transform bg-white p-3 shadow-sm ring-1 ring-slate-200 sm:grid-cols-[minmax(0,1fr)_auto]">
              <div className="min-w-0 space-y-2">
                <KeySwitch />
                <RpmControl idleRpm={vehicle.engine.idleRpm} maxRpm={Math.min(3000, vehicle.engine.maxHeldRpm)} />
              </div>
              <PileControl pile={vehicle.pile} dialSize={150} />
            </section>
          </div>
          <section aria-labelledby="bench-side-heading" className="flex min-h-0 flex-col rounded-xl bg-white shadow-sm ring-1 ring-slate-200">
            <h2 id="bench-side-heading" className="sr-only">
              Procedure and records
            </h2>
            <TabList
              label="Bench panels"
              idPrefix={idPrefix}
              items={tabs}
              selected={tab}
              onSelect={openTab}
              className="grid grid-cols-3 gap-1 border-b border-slate-200 p-1.5"
              tabClassName={(on) => `min-h-8 truncate rounded-md px-1.5 text-xs font-semibold ${on ? 'bg-slate-900 text-white' : 'text-slate-700 hover:bg-slate-100'}`}
            />
            {SIDE_TABS.map((k) => (
              <TabPanel key={k} idPrefix={idPrefix} tabKey={k} selected={tab} className="min-h-0 flex-1 overflow-y-auto p-3 focus-visible:outline-offset-[-2px]">
                {k === 'procedure' && (
                  <ProcedurePanel tests={tests} rules={scenario.passRules} ratedA={scenario.vehicle.alternatorRatedA} cca={scenario.vehicle.batteryCca} footer={p.procedureFooter} />
                )}
                {k === 'hookup' && <HookupPanel />}
                {k === 'car' && <CarPanel scenario={scenario} modeText={p.modeText} />}
                {k === 'readings' && p.readings}
                {k === 'charts' && tab === 'charts' && <ChartsPanel extra={p.charts} />}
                {k === 'diagnose' && p.diagnose}
              </TabPanel>
            ))}
            <div className="border-t border-slate-200 bg-stone-50 p-2 will-change-transform max-lg:fixed max-lg:inset-x-0 max-lg:bottom-0 max-lg:z-20 max-lg:shadow-[0_-2px_8px_rgb(0_0_0/0.08)] lg:rounded-b-xl" data-testid="record-area">
              {p.recordBar}
            </div>
          </section>
        </div>
      </div>
    </BenchEngineContext.Provider>
  );
}
