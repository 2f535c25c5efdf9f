/** /progress (a student's own) and /students/:userId/progress (their instructors'): competencies and sign-offs. */
import { useParams } from 'react-router-dom';
import { ErrorState, PageHeader, Spinner } from '../../components/ui/states.tsx';
import { paths } from '../../config/paths.ts';
import { useMyProgress, useStudentProgress } from '../../features/progress/api/get-progress.ts';
import { ProgressList } from '../../features/progress/components/progress-list.tsx';

export function MyProgressPage() {
  const q = useMyProgress();
  return (
    <>
      <PageHeader title="My progress" description="The tests of the charging-system family, and which ones an instructor has signed off." />
      {q.isPending ? <Spinner /> : q.isError ? <ErrorState error={q.error} retry={() => void q.refetch()} /> : <ProgressList progress={q.data} />}
    </>
  );
}

export function StudentProgressPage() {
  const userId = Number(useParams().userId);
  const q = useStudentProgress(userId);
  return (
    <>
      <PageHeader title={q.data ? `${q.data.student.name}: progress` : 'Progress'} description="Competencies signed off, and the graded attempts behind them." />
      {q.isPending ? <Spinner /> : q.isError ? <ErrorState error={q.error} retry={() => void q.refetch()} what="student" back={{ to: paths.classes.href(), label: 'Back to the classes' }} /> : <ProgressList progress={q.data} />}
    </>
  );
}
