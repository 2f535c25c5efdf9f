/**
 * An attempt's bench: the workspace on a running attempt (its events sent to
 * the server, its readings kept in this browser until submission); after
 * submission, the graded result.
 */
import { useMemo, useState } from 'react';
import { Link } from 'react-router-dom';
import type { DiagnosticTest } from '../../../../sim/faults.ts';
import { outputCurve } from '../../../../sim/instruments.ts';
import type { AttemptBootstrap, AttemptResult } from '../../../../shared/api/attempts.ts';
import { DIAGNOSTIC_TEST_LABELS } from '../../../../shared/scenario.ts';
import { paths } from '../../../config/paths.ts';
import { ErrorState, PageBody, PageHeader, Panel, Spinner } from '../../../components/ui/states.tsx';
import { useSubmitAttempt } from '../api/submit-attempt.ts';
import { useBenchSession, type BenchSession } from '../hooks/use-bench-session.ts';
import { useLiveInjections } from '../hooks/use-live-injections.ts';
import { useLocalReadings } from '../hooks/use-local-readings.ts';
import { AttemptResultView } from './attempt-result.tsx';
import { BenchWorkspace } from './bench-workspace.tsx';
import { LiveConnectionStatus } from './connection-status.tsx';
import { DiagnosisForm, type DiagnosisValues } from './diagnosis-form.tsx';
import { OutputCurveChart } from './output-curve-chart.tsx';
import { toRecorded, type LocalReading } from './reading-capture.ts';
import { ReadingsList, RecordBar } from './readings-panel.tsx';

const testLabel = (t: DiagnosticTest) => DIAGNOSTIC_TEST_LABELS[t];

function measuredPoints(readings: LocalReading[], pulleyRatio: number) {
  return readings.filter((r) => r.test === 'output' && r.quantity === 'current').map((r) => ({ altRpm: r.tachRpm * pulleyRatio, currentA: r.value }));
}

function SubmittedView({ boot, result }: { boot: AttemptBootstrap; result: AttemptResult }) {
  return (
    <>
      <PageHeader
        title={boot.scenario.title}
        description={boot.attempt.mode === 'practice' ? 'Practice run — submitted. The fault is revealed below.' : 'Submitted and graded.'}
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
        <AttemptResultView result={result} testLabel={testLabel} ratedA={boot.scenario.vehicle.alternatorRatedA} />
      </Panel>
    </>
  );
}

function LiveBench({ boot, session, onResult }: { boot: AttemptBootstrap; session: BenchSession; onResult: (r: AttemptResult) => void }) {
  const { engine, outbox, faults } = session;
  const { readings, add, remove, clear } = useLocalReadings(boot.attempt.id);
  const submit = useSubmitAttempt(boot.attempt.id);
  const [submitError, setSubmitError] = useState<string | null>(null);
  const [busy, setBusy] = useState(false);
  const scenario = boot.scenario;
  const vehicle = session.vehicle;
  const tests = scenario.tests;
  const practice = boot.attempt.mode === 'practice';
  const curve = useMemo(() => (practice ? outputCurve(vehicle, faults, { hot: false }) : null), [practice, vehicle, faults]);

  const onSubmit = async (d: DiagnosisValues) => {
    setSubmitError(null);
    setBusy(true);
    engine.stop();
    const atMs = engine.readNow().atMs;
    const sent = await outbox.flush();
    if (!sent) {
      setBusy(false);
      engine.start();
      setSubmitError('The bench cannot reach the server just now. Your work is kept in this browser; try again once the connection is back.');
      return;
    }
    submit.mutate(
      { atMs, readings: readings.map(toRecorded), diagnosis: d },
      {
        onSuccess: (result) => {
          outbox.clear();
          clear();
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
    <BenchWorkspace
      engine={engine}
      scenario={scenario}
      vehicle={vehicle}
      modeText={practice ? 'practice run (ungraded)' : 'assigned'}
      status={<LiveConnectionStatus outbox={outbox} />}
      readingCount={readings.length}
      readings={<ReadingsList tests={tests} readings={readings} onRemove={remove} disabled={busy} />}
      recordBar={<RecordBar tests={tests} accessories={vehicle.loads.accessories} onAdd={add} disabled={busy} />}
      charts={
        curve && (
          <section aria-labelledby="curve-heading">
            <h3 id="curve-heading" className="text-sm font-semibold text-slate-900">
              Output curve (practice)
            </h3>
            <p className="mb-2 text-xs text-slate-600">The fitted unit’s output at 13.5 V against alternator speed; dots are your output readings.</p>
            <OutputCurveChart fitted={curve} measured={measuredPoints(readings, vehicle.belt.pulleyRatio)} ratedA={scenario.vehicle.alternatorRatedA} />
          </section>
        )
      }
      diagnose={<DiagnosisForm tests={tests} choices={scenario.diagnosisChoices} readingCount={readings.length} submitting={busy || submit.isPending} error={submitError} onSubmit={(d) => void onSubmit(d)} />}
    />
  );
}

export function BenchScreen({ boot }: { boot: AttemptBootstrap }) {
  const [result, setResult] = useState<AttemptResult | null>(boot.result);
  const submitted = boot.attempt.status === 'submitted' || result !== null;
  const { session, error } = useBenchSession(boot, !submitted);
  useLiveInjections(boot.attempt.id, session?.engine ?? null, boot.benchKey);
  if (submitted && result)
    return (
      <PageBody>
        <SubmittedView boot={boot} result={result} />
      </PageBody>
    );
  if (submitted)
    return (
      <PageBody>
        <PageHeader title={boot.scenario.title} description="This attempt was submitted." />
      </PageBody>
    );
  if (error)
    return (
      <PageBody>
        <ErrorState error={error} />
      </PageBody>
    );
  if (!session)
    return (
      <PageBody>
        <Spinner label="Setting up the bench" />
      </PageBody>
    );
  return <LiveBench boot={boot} session={session} onResult={setResult} />;
}
