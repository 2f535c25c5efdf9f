/** /bench/new?assignmentId=… or ?scenarioId=…: starts an attempt on the server, then opens its bench. */
import { useEffect, useState } from 'react';
import { useNavigate, useSearchParams } from 'react-router-dom';
import type { AttemptBootstrap, StartAttemptInput } from '../../../shared/api/attempts.ts';
import { ErrorState, PageHeader, Spinner } from '../../components/ui/states.tsx';
import { paths } from '../../config/paths.ts';
import { queryClient } from '../../lib/query-client.ts';
import { attemptKeys } from '../../features/bench/api/get-attempt.ts';
import { startAttempt } from '../../features/bench/api/start-attempt.ts';

/** One request per start link, even when the page mounts twice. */
const starting = new Map<string, Promise<AttemptBootstrap>>();

function startInput(params: URLSearchParams): StartAttemptInput | null {
  const assignmentId = Number(params.get('assignmentId'));
  if (Number.isInteger(assignmentId) && assignmentId > 0) return { assignmentId };
  const scenarioId = Number(params.get('scenarioId'));
  if (Number.isInteger(scenarioId) && scenarioId > 0) return { scenarioId, mode: 'practice' };
  return null;
}

export function BenchNewPage() {
  const [params] = useSearchParams();
  const navigate = useNavigate();
  const [error, setError] = useState<unknown>(null);
  const input = startInput(params);
  const key = input ? JSON.stringify(input) : '';

  useEffect(() => {
    if (!key) return;
    let live = true;
    let promise = starting.get(key);
    if (!promise) {
      promise = startAttempt(JSON.parse(key) as StartAttemptInput);
      starting.set(key, promise);
      void promise.finally(() => setTimeout(() => starting.delete(key), 5000));
    }
    promise.then(
      (boot) => {
        if (!live) return;
        queryClient.setQueryData(attemptKeys.detail(boot.attempt.id), boot);
        void navigate(paths.benchAttempt.href(boot.attempt.id), { replace: true });
      },
      (err: unknown) => {
        if (live) setError(err);
      },
    );
    return () => {
      live = false;
    };
  }, [key, navigate]);

  const back = { to: paths.bench.href(), label: 'Back to the bench list' };
  if (!input) return <ErrorState error={new Error('This link does not say which scenario to open.')} back={back} />;
  return (
    <>
      <PageHeader title="Opening the bench" />
      {error ? <ErrorState error={error} what="assignment" back={back} /> : <Spinner label="Starting the attempt" />}
    </>
  );
}

export const Component = BenchNewPage;
