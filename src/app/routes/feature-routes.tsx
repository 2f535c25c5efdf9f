/**
 * The routes of the student's and the instructor's features. Heavy views are
 * split off with `lazy` so the first load stays small.
 */
import type { RouteObject } from 'react-router-dom';
import { paths } from '../../config/paths.ts';
import { PageHeader, EmptyState } from '../../components/ui/states.tsx';

function BenchHome() {
  return (
    <>
      <PageHeader title="Bench" description="Your assigned scenarios and practice benches." />
      <EmptyState title="No scenarios are assigned to you yet" />
    </>
  );
}

function MyAttempts() {
  return (
    <>
      <PageHeader title="My attempts" description="Every bench you have run, with its grade and time to diagnosis." />
      <EmptyState title="No attempts yet" />
    </>
  );
}

function ScenariosHome() {
  return (
    <>
      <PageHeader title="Scenarios" description="The fault scenario library." />
      <EmptyState title="The library is empty" />
    </>
  );
}

function ClassesHome() {
  return (
    <>
      <PageHeader title="Classes" description="Your sections, their students and assignments." />
      <EmptyState title="No classes yet" />
    </>
  );
}

export const studentRoutes: RouteObject[] = [
  { path: paths.bench.pattern, element: <BenchHome /> },
  { path: paths.attempts.pattern, element: <MyAttempts /> },
];

export const instructorRoutes: RouteObject[] = [
  { path: paths.scenarios.pattern, element: <ScenariosHome /> },
  { path: paths.classes.pattern, element: <ClassesHome /> },
];
