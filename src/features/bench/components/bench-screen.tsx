/**
 * An attempt's bench: the workspace on a running attempt (its events and
 * readings sent to the server as they happen); after submission, the graded
 * result.
 */
import { useState } from 'react';
import { Link } from 'react-router-dom';
import type { DiagnosticTest } from '../../../../sim/faults.ts';
import type { AttemptBootstrap, AttemptResult } from '../../../../shared/api/attempts.ts';
import { DIAGNOSTIC_TEST_LABELS } from '../../../../shared/scenario.ts';
import { paths } from '../../../config/paths.ts';
import { ErrorState, PageBody, PageHeader, Panel, Spinner } from '../../../components/ui/states.tsx';
import { useSubmitAttempt } from '../api/submit-attempt.ts';
import { useBenchSession, useLoggedReadings, type BenchSession } from '../hooks/use-bench-session.ts';
import { AttemptResultView } from './attempt-result.tsx';
import { BenchWorkspace } from './bench-workspace.tsx';
import { LiveConnectionStatus } from './connection-status.tsx';
import { DiagnosisForm, type DiagnosisValues } from './diagnosis-form.tsx';
import { HintsPanel } from './hints-panel.tsx';
import { ReadingsList, RecordBar } from './readings-panel.tsx';

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
    <BenchWorkspace
      engine={engine}
      scenario={scenario}
      vehicle={vehicle}
      modeText={practice ? 'practice run (ungraded)' : 'assigned'}
      status={<LiveConnectionStatus outbox={outbox} />}
      procedureFooter={<HintsPanel hints={scenario.hints} pointsEach={scenario.hintPoints} graded={!practice} log={session.hints} />}
      readingCount={readings.length}
      readings={<ReadingsList tests={tests} readings={readings} onRemove={session.readings.remove} disabled={busy} />}
      recordBar={<RecordBar tests={tests} accessories={vehicle.loads.accessories} readingCount={readings.length} onRecord={session.readings.record} disabled={busy} />}
      diagnose={
        <DiagnosisForm
          tests={tests}
          choices={scenario.diagnosisChoices}
          readingCount={readings.length}
          resultsAt={boot.attempt.resultsAt}
          submitting={busy || submit.isPending}
          error={submitError}
          onSubmit={(d) => void onSubmit(d)}
        />
      }
    />
  );
}

export function BenchScreen({ boot }: { boot: AttemptBootstrap }) {
  const [submittedHere, setResult] = useState<AttemptResult | null>(null);
  // Submitted here, or (read again) on another device while this bench was open.
  const result = submittedHere ?? boot.result;
  const submitted = boot.attempt.status === 'submitted' || result !== null;
  const { session, error } = useBenchSession(boot, !submitted);
  if (submitted && result)
    return (
      <PageBody>
        <SubmittedView boot={boot} result={result} />
      </PageBody>
    );
  if (submitted)
    return (
      <PageBody>
        <PageHeader
          title={boot.scenario.title}
          description="This attempt was submitted; its bench is closed. Its grade shows in your attempts once results are released."
          actions={
            <Link to={paths.attempts.href()} className="rounded-md bg-slate-900 px-3 py-2 text-sm font-medium text-white hover:bg-slate-700">
              My attempts
            </Link>
          }
        />
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
