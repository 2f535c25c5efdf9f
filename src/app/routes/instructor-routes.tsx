/** The instructor's routes (admins see them too). */
import type { RouteObject } from 'react-router-dom';
import { paths } from '../../config/paths.ts';
import { EmptyState, PageHeader } from '../../components/ui/states.tsx';

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

export const instructorRoutes: RouteObject[] = [
  { path: paths.scenarios.pattern, element: <ScenariosHome /> },
  { path: paths.classes.pattern, element: <ClassesHome /> },
];
