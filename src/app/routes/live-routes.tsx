/**
 * Routes of the live board, replays, the class comparison and progress, each
 * behind its roles (the server checks the same, and ownership besides).
 */
import type { RouteObject } from 'react-router-dom';
import { paths } from '../../config/paths.ts';
import { roleLoader } from './role-guard.tsx';

export const liveRoutes: RouteObject[] = [
  {
    loader: roleLoader('instructor', 'admin'),
    children: [
      { path: paths.live.pattern, lazy: () => import('./live-board.tsx') },
      { path: paths.studentProgress.pattern, lazy: async () => ({ Component: (await import('./progress-page.tsx')).StudentProgressPage }) },
    ],
  },
  {
    loader: roleLoader('student'),
    children: [{ path: paths.progress.pattern, lazy: async () => ({ Component: (await import('./progress-page.tsx')).MyProgressPage }) }],
  },
  {
    loader: roleLoader('student', 'instructor', 'admin'),
    children: [
      { path: paths.replay.pattern, lazy: () => import('./replay-page.tsx') },
      { path: paths.compare.pattern, lazy: () => import('./compare-page.tsx') },
    ],
  },
];
