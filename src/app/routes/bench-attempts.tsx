/** /attempts: the student's own attempts. */
import { ErrorState, PageHeader, Spinner } from '../../components/ui/states.tsx';
import { useMyAttempts } from '../../features/attempts/api/get-my-attempts.ts';
import { AttemptsTable } from '../../features/attempts/components/attempts-table.tsx';

export function MyAttemptsPage() {
  const query = useMyAttempts();
  return (
    <>
      <PageHeader title="My attempts" description="Every bench you have run, with its grade and time to diagnosis." />
      {query.isPending ? <Spinner /> : query.isError ? <ErrorState error={query.error} retry={() => void query.refetch()} /> : <AttemptsTable attempts={query.data} />}
    </>
  );
}

export const Component = MyAttemptsPage;
