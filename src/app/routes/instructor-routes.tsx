/** The instructor's routes (admins see them too). */
import type { RouteObject } from 'react-router-dom';
import { paths } from '../../config/paths.ts';
import { ClassPage, classLoader } from './instructor-class.tsx';
import { ClassesPage, classesLoader } from './instructor-classes.tsx';
import { EditScenarioPage, NewScenarioPage, scenarioLoader } from './instructor-scenario-editor.tsx';
import { ScenariosPage, scenariosLoader } from './instructor-scenarios.tsx';

export const instructorRoutes: RouteObject[] = [
  { path: paths.scenarios.pattern, loader: scenariosLoader, element: <ScenariosPage /> },
  { path: paths.scenarioNew.pattern, element: <NewScenarioPage /> },
  { path: paths.scenario.pattern, loader: scenarioLoader, element: <EditScenarioPage /> },
  { path: paths.classes.pattern, loader: classesLoader, element: <ClassesPage /> },
  { path: paths.class.pattern, loader: classLoader, element: <ClassPage /> },
];
