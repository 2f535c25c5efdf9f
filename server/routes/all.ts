/** Every API route group, in mounting order. A new group is added here and nowhere else. */
import type { AppContext } from '../context.ts';
import type { RouteGroup } from '../http/route-table.ts';
import { authRoutes } from './auth.ts';
import { liveRoutes } from './live.ts';
import { compareRoutes } from './compare.ts';
import { signOffRoutes } from './sign-offs.ts';
import { replayRoutes } from './replay.ts';
import { outboxRoutes, userRoutes } from './users.ts';
import { scenarioRoutes } from './scenarios.ts';
import { classRoutes } from './classes.ts';
import { rosterRoutes } from './roster.ts';
import { assignmentRoutes } from './assignments.ts';
import { attemptRoutes } from './attempts.ts';
import { ltiApiRoutes, ltiBrowserRoutes } from '../lti/routes.ts';

export function allRouteGroups(ctx: AppContext): RouteGroup[] {
  return [
    authRoutes(ctx),
    liveRoutes(ctx),
    compareRoutes(ctx),
    signOffRoutes(ctx),
    replayRoutes(ctx),
    userRoutes(ctx),
    outboxRoutes(ctx),
    scenarioRoutes(ctx),
    classRoutes(ctx),
    rosterRoutes(ctx),
    assignmentRoutes(ctx),
    attemptRoutes(ctx),
    ltiApiRoutes(ctx),
    ltiBrowserRoutes(ctx),
  ];
}
