/** The student's routes. Heavy views (the bench) are split off with `lazy`. */
import type { RouteObject } from 'react-router-dom';
import { paths } from '../../config/paths.ts';
import { EmptyState, PageHeader } from '../../components/ui/states.tsx';
import { StudentBenchHome } from './student-bench-home.tsx';

function MyAttempts() {
  return (
    <>
      <PageHeader title="My attempts" description="Every bench you have run, with its grade and time to diagnosis." />
      <EmptyState title="No attempts yet" />
    </>
  );
}

export const studentRoutes: RouteObject[] = [
  { path: paths.bench.pattern, element: <StudentBenchHome /> },
  { path: paths.attempts.pattern, element: <MyAttempts /> },
];
