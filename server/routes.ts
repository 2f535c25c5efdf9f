/** Every API route group, in mounting order. A new group is added here and nowhere else. */
import type { AppContext } from './context.ts';
import type { RouteGroup } from './http/route-table.ts';
import { authRoutes } from './accounts/auth-routes.ts';
import { liveRoutes } from './live/routes.ts';
import { compareRoutes } from './grading/compare-routes.ts';
import { signOffRoutes } from './grading/sign-off-routes.ts';
import { replayRoutes } from './replay/routes.ts';
import { userRoutes } from './accounts/user-routes.ts';
import { outboxRoutes } from './mail/routes.ts';
import { scenarioRoutes } from './library/routes.ts';
import { classRoutes } from './classes/routes.ts';
import { rosterRoutes } from './classes/roster-routes.ts';
import { assignmentRoutes } from './assignments/routes.ts';
import { attemptRoutes } from './attempts/routes.ts';
import { ltiApiRoutes, ltiBrowserRoutes } from './lti/routes.ts';

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
