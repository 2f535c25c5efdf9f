/**
 * An instructor's try-out of a scenario: the same bench as a student's, on
 * the scenario's car with its faults, run in this browser only. Nothing is
 * sent or stored and nothing is graded; the diagnosis is checked against the
 * scenario's faults on the spot.
 */
import { useEffect, useMemo, useState } from 'react';
import { compileCar } from '../../../../sim/compiled-car.ts';
import { FAULT_TEXT } from '../../../../shared/fault-catalogue-text.ts';
import { outputCurve } from '../../../../sim/instruments.ts';
import { benchScenarioView, type RecordedReading } from '../../../../shared/api/attempts.ts';
import { diagnosisLabel, type ScenarioDefinition } from '../../../../shared/scenario.ts';
import { Button } from '../../../components/ui/button.tsx';
import { createHintsLog } from '../hooks/hints-log.ts';
import type { LoggedReading } from '../hooks/use-bench-session.ts';
import { createBenchEngine } from '../stores/bench-engine.ts';
import { BenchWorkspace } from './bench-workspace.tsx';
import { DiagnosisForm, type DiagnosisValues } from './diagnosis-form.tsx';
import { HintsPanel } from './hints-panel.tsx';
import { OutputCurveChart } from '../../../components/output-curve-chart.tsx';
import { ReadingsList, RecordBar } from './readings-panel.tsx';

function TryOutVerdict({ definition, diagnosis, onAgain }: { definition: ScenarioDefinition; diagnosis: DiagnosisValues; onAgain: () => void }) {
  const actual = definition.faults.length ? [...new Set(definition.faults.map((f) => f.kind))] : (['none'] as const);
  const right = (actual as readonly string[]).includes(diagnosis.faultKind);
  return (
    <div className="space-y-3 text-sm" role="status" data-testid="try-out-verdict">
      <p className={`rounded-md px-3 py-2 font-medium ${right ? 'bg-live-50 text-live-700' : 'bg-warn-100 text-warn-700'}`}>
        {right ? 'Right' : 'Not this time'}: you named “{diagnosisLabel(diagnosis.faultKind)}”.
      </p>
      <p className="text-slate-700">
        The scenario’s {actual.length === 1 ? 'fault is' : 'faults are'}: {actual.map((k) => (k === 'none' ? diagnosisLabel('none') : FAULT_TEXT[k].label)).join('; ')}.
      </p>
      <p className="text-slate-600">A try-out is not graded and nothing of it is stored. Students are graded on the server’s re-run of their own attempt.</p>
      <Button variant="secondary" onClick={onAgain}>
        Back to the diagnosis
      </Button>
    </div>
  );
}

export function TryOutBench({ definition, versionLabel }: { definition: ScenarioDefinition; versionLabel: string }) {
  const view = useMemo(() => benchScenarioView(definition), [definition]);
  const [seed] = useState(() => Math.floor(Math.random() * 2 ** 31));
  // The car as a student's bench gets it: the faults compiled into it, never listed.
  const car = useMemo(() => compileCar(definition.vehicle.params, definition.faults, definition.vehicle.name), [definition]);
  const engine = useMemo(() => createBenchEngine({ params: car.params, seed, changes: car.changes }), [car, seed]);
  // Hints open here as on a student's bench, logged nowhere.
  const hints = useMemo(() => createHintsLog([], () => undefined, () => engine.getSnapshot().timeMs), [engine]);
  useEffect(() => {
    engine.start();
    return () => engine.stop();
  }, [engine]);
  /** The readings taken here, each with the engine speed at the time (for the output curve); kept in this page only. */
  const [readings, setReadings] = useState<{ logged: LoggedReading; tachRpm: number }[]>([]);
  const record = (reading: RecordedReading) =>
    setReadings((xs) => [...xs, { logged: { reading, seq: xs.length + 1, stored: false }, tachRpm: engine.readNow().readings.tachRpm }]);
  const [diagnosis, setDiagnosis] = useState<DiagnosisValues | null>(null);
  const curve = useMemo(() => outputCurve(car.params, car.changes, { hot: false }), [car]);
  const pulley = definition.vehicle.params.belt.pulleyRatio;
  return (
    <BenchWorkspace
      engine={engine}
      scenario={view}
      vehicle={definition.vehicle.params}
      modeText={`try-out of ${versionLabel}: ungraded, nothing is stored`}
      status={
        <span className="whitespace-nowrap rounded-full bg-warn-100 px-2.5 py-1 text-xs font-medium text-warn-700 ring-1 ring-warn-500/40" data-testid="try-out-badge">
          Try-out, not saved
        </span>
      }
      procedureFooter={<HintsPanel hints={view.hints} pointsEach={view.hintPoints} graded={false} log={hints} />}
      readingCount={readings.length}
      readings={
        <ReadingsList tests={view.tests} readings={readings.map((r) => r.logged)} showSaved={false} onRemove={(id) => setReadings((xs) => xs.filter((r) => r.logged.reading.id !== id))} />
      }
      recordBar={<RecordBar tests={view.tests} accessories={definition.vehicle.params.loads.accessories} readingCount={readings.length} onRecord={record} />}
      charts={
        <section aria-labelledby="try-curve-heading">
          <h3 id="try-curve-heading" className="text-sm font-semibold text-slate-900">
            Output curve of the fitted unit
          </h3>
          <OutputCurveChart
            fitted={curve}
            measured={readings.filter((r) => r.logged.reading.test === 'output').map((r) => ({ altRpm: r.tachRpm * pulley, currentA: r.logged.reading.value }))}
            ratedA={view.vehicle.alternatorRatedA}
          />
        </section>
      }
      diagnose={
        diagnosis ? (
          <TryOutVerdict definition={definition} diagnosis={diagnosis} onAgain={() => setDiagnosis(null)} />
        ) : (
          <DiagnosisForm tests={view.tests} choices={view.diagnosisChoices} readingCount={readings.length} submitting={false} error={null} onSubmit={setDiagnosis} submitLabel="Check my diagnosis" />
        )
      }
    />
  );
}
