/**
 * The bench: the reading strip, the engine-bay schematic with its hook-up,
 * the controls and the dial, the charts, the procedure for each test, the
 * readings and the diagnosis; after submission, the graded result.
 */
import { useState } from 'react';
import { Link } from 'react-router-dom';
import type { DiagnosticTest } from '../../../../sim/faults.ts';
import type { AttemptBootstrap, AttemptResult } from '../../../../shared/api/attempts.ts';
import { DIAGNOSTIC_TEST_LABELS } from '../../../../shared/scenario.ts';
import { paths } from '../../../config/paths.ts';
import { ErrorState, PageHeader, Panel, Spinner } from '../../../components/ui/states.tsx';
import { useSubmitAttempt } from '../api/submit-attempt.ts';
import { BenchEngineContext } from '../hooks/use-bench.ts';
import { useBenchSession, useLoggedReadings, type BenchSession } from '../hooks/use-bench-session.ts';
import { AttemptResultView } from './attempt-result.tsx';
import { BenchSchematic } from './bench-schematic.tsx';
import { BenchStatus } from './bench-status.tsx';
import { LiveConnectionStatus } from './connection-status.tsx';
import { DiagnosisForm, type DiagnosisValues } from './diagnosis-form.tsx';
import { AccessorySwitches, KeySwitch, RpmControl } from './engine-controls.tsx';
import { HookupPanel } from './hookup-panel.tsx';
import { PileControl } from './pile-control.tsx';
import { GENERAL_CAUTIONS } from './procedure-content.ts';
import { ProcedurePanel } from './procedure-panel.tsx';
import { ReadingStrip } from './reading-strip.tsx';
import { ReadingsPanel } from './readings-panel.tsx';
import { RippleScope } from './ripple-scope.tsx';
import { StripChart } from './strip-chart.tsx';
import { TimeControls } from './time-controls.tsx';

const testLabel = (t: DiagnosticTest) => DIAGNOSTIC_TEST_LABELS[t];

function SubmittedView({ boot, result }: { boot: AttemptBootstrap; result: AttemptResult }) {
  return (
    <>
      <PageHeader
        title={boot.scenario.title}
        description={
          boot.attempt.mode === 'practice'
            ? 'Practice run — submitted. How each reading was taken is below; the fault is not revealed, so the scenario can be practised again.'
            : result.hidden
              ? 'Submitted. This assignment shows results when it closes.'
              : 'Submitted and graded.'
        }
        actions={
          <>
            <Link to={paths.bench.href()} className="rounded-md bg-white px-3 py-2 text-sm font-medium ring-1 ring-slate-300 hover:bg-slate-50">
              Back to the bench list
            </Link>
            <Link to={paths.attempts.href()} className="rounded-md bg-slate-900 px-3 py-2 text-sm font-medium text-white hover:bg-slate-700">
              My attempts
            </Link>
          </>
        }
      />
      <Panel title="Result">
        <AttemptResultView result={result} testLabel={testLabel} ratedA={boot.scenario.vehicle.alternatorRatedA} attemptId={boot.attempt.id} />
      </Panel>
    </>
  );
}

function LiveBench({ boot, session, onResult }: { boot: AttemptBootstrap; session: BenchSession; onResult: (r: AttemptResult) => void }) {
  const { engine, outbox } = session;
  const readings = useLoggedReadings(session.readings);
  const submit = useSubmitAttempt(boot.attempt.id);
  const [submitError, setSubmitError] = useState<string | null>(null);
  const [busy, setBusy] = useState(false);
  const scenario = boot.scenario;
  const vehicle = session.vehicle;
  const tests = scenario.tests;
  const testIds = tests.map((t) => t.test);
  const practice = boot.attempt.mode === 'practice';

  const onSubmit = async (d: DiagnosisValues) => {
    setSubmitError(null);
    setBusy(true);
    engine.stop();
    const atMs = engine.getSnapshot().timeMs;
    const sent = await outbox.flush();
    if (!sent) {
      setBusy(false);
      engine.start();
      setSubmitError('The bench cannot reach the server just now. Your work is kept in this browser; try again once the connection is back.');
      return;
    }
    submit.mutate(
      { atMs, diagnosis: d },
      {
        onSuccess: (result) => {
          outbox.clear();
          onResult(result);
        },
        onError: (err) => {
          setBusy(false);
          engine.start();
          setSubmitError(err.message);
        },
      },
    );
  };

  return (
    <BenchEngineContext.Provider value={engine}>
      <PageHeader
        title={scenario.title}
        description={
          <>
            <span className="block">{scenario.summary}</span>
            <span className="mt-1 block text-xs text-slate-600">
              {scenario.vehicle.name} · {scenario.vehicle.engineDescription} · alternator rated {scenario.vehicle.alternatorRatedA} A · battery {scenario.vehicle.batteryCca} CCA,{' '}
              {scenario.vehicle.batteryCapacityAh} Ah · pulley {scenario.vehicle.pulleyRatio}:1 · {practice ? 'practice run (ungraded)' : 'assigned'}
            </span>
          </>
        }
        actions={<LiveConnectionStatus outbox={outbox} />}
      />
      <div className="space-y-4">
        <ReadingStrip />
        <BenchStatus />
        <div className="grid gap-4 lg:grid-cols-12">
          <div className="lg:col-span-8">
            <BenchSchematic accessories={vehicle.loads.accessories} />
          </div>
          <Panel className="lg:col-span-4" title="Controls">
            <div className="space-y-5">
              <KeySwitch />
              <RpmControl idleRpm={vehicle.engine.idleRpm} maxRpm={Math.min(3000, vehicle.engine.maxHeldRpm)} />
              <PileControl pile={vehicle.pile} />
            </div>
          </Panel>
        </div>
        <div className="grid gap-4 lg:grid-cols-12">
          <Panel className="lg:col-span-5" title="Hook-up">
            <HookupPanel />
          </Panel>
          <Panel className="lg:col-span-4" title="Last minute">
            <StripChart />
          </Panel>
          <Panel className="lg:col-span-3" title="Ripple">
            <RippleScope />
          </Panel>
        </div>
        <div className="grid gap-4 lg:grid-cols-12">
          <Panel className="lg:col-span-8" title="Accessories">
            <AccessorySwitches accessories={vehicle.loads.accessories} />
          </Panel>
          <Panel className="lg:col-span-4" title="Time">
            <TimeControls />
          </Panel>
        </div>
        <div className="grid gap-4 lg:grid-cols-2">
          <Panel title="Procedure">
            <ProcedurePanel tests={testIds} rules={scenario.passRules} ratedA={scenario.vehicle.alternatorRatedA} cca={scenario.vehicle.batteryCca} />
          </Panel>
          <Panel title="Readings">
            <ReadingsPanel tests={tests} readings={readings} onRecord={session.readings.record} onRemove={session.readings.remove} disabled={busy} />
          </Panel>
        </div>
        <Panel title="Diagnosis">
          <DiagnosisForm
            tests={tests}
            choices={scenario.diagnosisChoices}
            readingCount={readings.length}
            resultsAt={boot.attempt.resultsAt}
            submitting={busy || submit.isPending}
            error={submitError}
            onSubmit={(d) => void onSubmit(d)}
          />
        </Panel>
        <aside aria-label="Safety" className="rounded-xl bg-white p-4 text-xs text-slate-600 ring-1 ring-slate-200">
          <p className="mb-1 font-semibold text-slate-800">Safety on a real car</p>
          <ul className="list-disc space-y-0.5 pl-5">
            {GENERAL_CAUTIONS.map((c) => (
              <li key={c}>{c}</li>
            ))}
          </ul>
          <p className="mt-2">Always work to the vehicle maker’s service information, local codes and licensed practice.</p>
        </aside>
      </div>
    </BenchEngineContext.Provider>
  );
}

export function BenchScreen({ boot }: { boot: AttemptBootstrap }) {
  const [result, setResult] = useState<AttemptResult | null>(boot.result);
  const submitted = boot.attempt.status === 'submitted' || result !== null;
  const { session, error } = useBenchSession(boot, !submitted);
  if (submitted && result) return <SubmittedView boot={boot} result={result} />;
  if (submitted) return <PageHeader title={boot.scenario.title} description="This attempt was submitted." />;
  if (error) return <ErrorState error={error} />;
  if (!session) return <Spinner label="Setting up the bench" />;
  return <LiveBench boot={boot} session={session} onResult={setResult} />;
}
