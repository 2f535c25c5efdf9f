/** /bench/:attemptId: the live bench of one attempt (resumes where it was left), or its result. */
import { useParams } from 'react-router-dom';
import { ErrorState, Spinner } from '../../components/ui/states.tsx';
import { useAttempt } from '../../features/bench/api/get-attempt.ts';
import { BenchScreen } from '../../features/bench/components/bench-screen.tsx';

export function BenchAttemptPage() {
  const { attemptId } = useParams();
  const id = Number(attemptId);
  const valid = Number.isInteger(id) && id > 0;
  const query = useAttempt(valid ? id : 0);
  if (!valid) return <ErrorState error={new Error('There is no attempt at this address.')} />;
  if (query.isPending) return <Spinner label="Loading the attempt" />;
  if (query.isError) return <ErrorState error={query.error} retry={() => void query.refetch()} />;
  return <BenchScreen key={id} boot={query.data} />;
}

export const Component = BenchAttemptPage;
