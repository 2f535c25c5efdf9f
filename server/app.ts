import { existsSync } from 'node:fs';
import { resolve } from 'node:path';
import express from 'express';
import helmet from 'helmet';
import { csrf } from './http/csrf.ts';
import { loadUser } from './accounts/guard.ts';
import { sessionMiddleware } from './accounts/session.ts';
import type { AppContext } from './context.ts';
import { apiNotFound, errorHandler } from './http/errors.ts';
import { allowPlatformFrames, formTargets, frameAncestors, framePolicy } from './lti/frame-policy.ts';
import type { RouteSpec } from './http/route-table.ts';
import { markReceived } from './http/server-timing.ts';
import { allRouteGroups } from './routes.ts';
import { sessionBusFor } from './db/live-bus.ts';

export interface CreatedApp {
  app: express.Express;
  routes: RouteSpec[];
}

/** The Express app: API under /api, and the built client (when given) for everything else. */
export function createApp(ctx: AppContext, opts: { staticDir?: string } = {}): CreatedApp {
  const app = express();
  const production = ctx.env.NODE_ENV === 'production';
  app.disable('x-powered-by');
  // API answers are no-store, so an ETag (a hash of every body) would never be used; the client's files keep theirs (express.static).
  app.set('etag', false);
  if (ctx.env.TRUST_PROXY) app.set('trust proxy', 1);

  // Registered learning platforms may frame Loadline and receive its deep-linking forms (server/lti/frame-policy.ts).
  app.use(framePolicy(ctx));
  app.use(
    helmet({
      contentSecurityPolicy: {
        useDefaults: false,
        directives: {
          defaultSrc: ["'self'"],
          scriptSrc: ["'self'"],
          styleSrc: ["'self'"],
          imgSrc: ["'self'", 'data:'],
          fontSrc: ["'self'"],
          connectSrc: ["'self'"],
          objectSrc: ["'none'"],
          baseUri: ["'self'"],
          formAction: [formTargets],
          frameAncestors: [frameAncestors],
        },
      },
      crossOriginEmbedderPolicy: false,
    }),
    allowPlatformFrames,
  );

  const session = sessionMiddleware({ pool: ctx.pool, secret: ctx.env.SESSION_SECRET, secure: ctx.env.TRUST_PROXY, bus: sessionBusFor(ctx) });
  app.use(
    '/api',
    markReceived,
    express.json({ limit: '256kb' }),
    session,
    csrf({ secret: ctx.env.SESSION_SECRET, secure: ctx.env.TRUST_PROXY }).protect,
    loadUser(ctx.db),
    (_req, res, next) => {
      res.setHeader('Cache-Control', 'no-store');
      next();
    },
  );

  // A launch from a learning platform is handed to a session under /lti (server/lti/routes.ts): forms posted by
  // the platform's site, so no CSRF token; the id_token's signature, state and nonce stand in for it.
  app.use('/lti', session);

  const routes: RouteSpec[] = [];
  for (const group of allRouteGroups(ctx)) {
    app.use(group.base, group.router);
    routes.push(...group.specs);
  }
  app.use('/api', apiNotFound);

  if (opts.staticDir && existsSync(opts.staticDir)) {
    const dir = resolve(opts.staticDir);
    app.use(express.static(dir, { index: false, maxAge: '1h', immutable: false }));
    // Named relative to `root`: Express's file sender refuses a dot-folder anywhere in the path it is given, so an
    // absolute path would fail for a checkout under, say, ~/.projects. Only the name's own parts are checked this way.
    app.get('/{*splat}', (_req, res) => {
      res.sendFile('index.html', { root: dir });
    });
  }

  app.use(errorHandler({ production, log: (err) => ctx.log('error', 'request failed', err) }));
  return { app, routes };
}
