/** The instructor's routes (admins see them too), each split off with `lazy` so students never load them. */
import type { RouteObject } from 'react-router-dom';
import { paths } from '../../config/paths.ts';

export const instructorRoutes: RouteObject[] = [
  {
    path: paths.scenarios.pattern,
    lazy: () => import('./instructor-scenarios.tsx').then((m) => ({ loader: m.scenariosLoader, Component: m.ScenariosPage })),
  },
  {
    path: paths.scenarioNew.pattern,
    lazy: () => import('./instructor-scenario-editor.tsx').then((m) => ({ Component: m.NewScenarioPage })),
  },
  {
    path: paths.scenario.pattern,
    lazy: () => import('./instructor-scenario-editor.tsx').then((m) => ({ loader: m.scenarioLoader, Component: m.EditScenarioPage })),
  },
  { path: paths.scenarioTry.pattern, lazy: () => import('./scenario-try.tsx') },
  {
    path: paths.classes.pattern,
    lazy: () => import('./instructor-classes.tsx').then((m) => ({ loader: m.classesLoader, Component: m.ClassesPage })),
  },
  {
    path: paths.deepLink.pattern,
    lazy: () => import('./deep-link-page.tsx').then((m) => ({ Component: m.DeepLinkPage })),
  },
  {
    path: paths.class.pattern,
    lazy: () => import('./instructor-class.tsx').then((m) => ({ loader: m.classLoader, Component: m.ClassPage })),
  },
];
