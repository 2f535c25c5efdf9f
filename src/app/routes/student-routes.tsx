/** The student's routes. Heavy views (the bench) are split off with `lazy`. */
import type { RouteObject } from 'react-router-dom';
import { paths } from '../../config/paths.ts';
import { StudentBenchHome } from './student-bench-home.tsx';

export const studentRoutes: RouteObject[] = [
  { path: paths.bench.pattern, element: <StudentBenchHome /> },
  { path: paths.benchNew.pattern, lazy: () => import('./bench-new.tsx') },
  { path: paths.benchAttempt.pattern, lazy: () => import('./bench-attempt.tsx') },
  { path: paths.attempts.pattern, lazy: () => import('./bench-attempts.tsx') },
];
