/** /bench/:attemptId: the live bench of one attempt (resumes where it was left), or its result. */
import { useParams } from 'react-router-dom';
import { ErrorState, PageBody, Spinner } from '../../components/ui/states.tsx';
import { paths } from '../../config/paths.ts';
import { ApiError } from '../../lib/api-client.ts';
import { useAttempt } from '../../features/bench/api/get-attempt.ts';
import { BenchScreen } from '../../features/bench/components/bench-screen.tsx';

const backToAttempts = { to: paths.attempts.href(), label: 'Back to my attempts' };

export function BenchAttemptPage() {
  const { attemptId } = useParams();
  const id = Number(attemptId);
  const valid = Number.isInteger(id) && id > 0;
  const query = useAttempt(valid ? id : 0);
  if (!valid)
    return (
      <PageBody>
        <ErrorState error={new ApiError(404, 'No such attempt')} what="attempt" back={backToAttempts} />
      </PageBody>
    );
  if (query.isPending)
    return (
      <PageBody>
        <Spinner label="Loading the attempt" />
      </PageBody>
    );
  if (query.isError)
    return (
      <PageBody>
        <ErrorState error={query.error} retry={() => void query.refetch()} what="attempt" back={backToAttempts} />
      </PageBody>
    );
  return <BenchScreen key={id} boot={query.data} />;
}

export const Component = BenchAttemptPage;

/** The bench fills the window below the menu: no page margins. */
export const handle = { workspace: true };
