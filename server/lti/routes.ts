/**
 * The learning-platform link's routes. Under /lti, what a platform and the
 * browser it sends reach (login initiation, launch, the session handoff and
 * the public key set): public, form posts from another site, answered with
 * redirects and plain pages. Under /api/lti, what the admin page, the
 * deep-linking picker, the grade-sync panel and the class page call. Each
 * route parses, checks access, calls its domain and answers.
 */
import express, { type Request, type Response } from 'express';
import type { SessionUser } from '../../shared/api/auth.ts';
import {
  assignmentIdParamsSchema,
  classIdParamsSchema,
  deepLinkChoiceSchema,
  deepLinkIdParamsSchema,
  outboxIdParamsSchema,
  platformIdParamsSchema,
  platformInputSchema,
} from '../../shared/api/lti.ts';
import { assertCanManageAssignment, assertCanManageClass, requireAttemptInstructor } from '../accounts/access.ts';
import { newCsrfToken } from '../http/csrf.ts';
import { currentUser } from '../accounts/guard.ts';
import type { AppContext } from '../context.ts';
import { HttpError } from '../http/errors.ts';
import { routeGroup, type RouteGroup } from '../http/route-table.ts';
import { parseBody, parseParams } from '../http/validate.ts';
import { activeUser } from './accounts.ts';
import { answerDeepLink, deepLinkRequestOf } from './deep-linking.ts';
import { forgetFramePolicy } from './frame-policy.ts';
import { gradeSyncOf, resendScore, scoreOutboxRow } from './scores.ts';
import { consumeHandoff, createHandoff, peekHandoff } from './handoff.ts';
import { listKeys, publicKeySet, rotateKey } from './keys.ts';
import { provisionLaunch } from './launch.ts';
import { startLogin } from './login.ts';
import { openInWindowPage, PAGE_CSS, refusalPage } from './pages.ts';
import { createPlatform, deletePlatform, listPlatforms, updatePlatform } from './platforms.ts';
import { fieldOf, LaunchRefusal, refuse } from './refusal.ts';
import { classLinkOf, syncRoster } from './roster-sync.ts';
import { verifyLaunch } from './verify.ts';
import { toolConfig, toolBase } from './tool-config.ts';

const STAFF = ['instructor', 'admin'] as const;
const ADMIN = ['admin'] as const;

const forms = express.urlencoded({ extended: false, limit: '96kb', parameterLimit: 20 });

function noStore(res: Response): void {
  res.setHeader('Cache-Control', 'no-store');
}

/**
 * A refused launch: a log line with the reason and what it concerns, and for
 * a browser a page saying what went wrong; a client that does not ask for
 * HTML gets the usual JSON error, naming the field.
 */
function answerRefusal(ctx: AppContext, req: Request, res: Response, err: unknown): void {
  if (!(err instanceof LaunchRefusal)) throw err;
  ctx.log('warn', `lti ${req.path.replace(/^\//, '')} refused: ${err.reason}`, { reason: err.reason, status: err.status, message: err.message, ...err.detail });
  noStore(res);
  if ((req.get('accept') ?? '').includes('text/html')) res.status(err.status).type('html').send(refusalPage(err.title, err.message, err.hint));
  else res.status(err.status).json({ error: { message: `${err.title}: ${err.message}`, field: fieldOf(err) } });
}

const regenerate = (req: Request) => new Promise<void>((resolve, reject) => req.session.regenerate((err) => (err ? reject(err) : resolve())));
const save = (req: Request) => new Promise<void>((resolve, reject) => req.session.save((err) => (err ? reject(err) : resolve())));

/**
 * Signs the browser in as the launch's person on a fresh session id. Inside a
 * frame of another site, over TLS, the cookie is SameSite=None and
 * Partitioned (kept for this platform's site only), the one kind a browser
 * that blocks third-party cookies may still keep.
 */
async function signIn(req: Request, user: SessionUser): Promise<void> {
  await regenerate(req);
  req.session.userId = user.id;
  req.session.role = user.role;
  req.session.csrfToken = newCsrfToken();
  if (req.get('sec-fetch-dest') === 'iframe' && req.secure) {
    req.session.cookie.sameSite = 'none';
    req.session.cookie.secure = true;
    (req.session.cookie as { partitioned?: boolean }).partitioned = true;
  }
  await save(req);
}

/** The browser-facing side: login initiation, launch, session handoff, key set. */
export function ltiBrowserRoutes(ctx: AppContext): RouteGroup {
  const g = routeGroup('/lti');

  const login = async (req: Request, res: Response) => {
    try {
      const params = req.method === 'POST' ? req.body : req.query;
      const { location } = await startLogin(ctx.db, params, toolBase(ctx));
      noStore(res);
      res.redirect(302, location);
    } catch (err) {
      answerRefusal(ctx, req, res, err);
    }
  };
  // 1EdTech Security Framework 1.0 §5.1.1.1: the platform may send the login initiation by GET or POST.
  g.get('/login', 'public', login);
  g.post('/login', 'public', forms, login);

  const launch = async (req: Request, res: Response) => {
    try {
      const verified = await verifyLaunch(ctx.db, req.body ?? {});
      const outcome = await provisionLaunch(ctx.db, verified);
      ctx.log('info', 'lti launch', { platformId: verified.platform.id, userId: outcome.userId, role: outcome.role, classId: outcome.classId, assignmentId: outcome.assignmentId });
      noStore(res);
      res.redirect(303, `/lti/enter?token=${encodeURIComponent(outcome.handoff)}`);
    } catch (err) {
      answerRefusal(ctx, req, res, err);
    }
  };
  // The id_token comes to the redirect address Loadline names (/lti/launch); a platform that posts a deep-linking
  // request to the deep-linking address it was given is answered the same way.
  g.post('/launch', 'public', forms, launch);
  g.post('/deep-linking', 'public', forms, launch);

  g.get('/enter', 'public', async (req, res) => {
    try {
      const token = typeof req.query.token === 'string' ? req.query.token : '';
      const handoff = token ? await consumeHandoff(ctx.db, token) : null;
      if (!handoff) throw refuse(400, 'This link has been used', 'The sign-in link of this launch has been used or has expired.', 'handoff-spent');
      const user = await activeUser(ctx.db, handoff.userId);
      if (!user) throw refuse(403, 'This account is disabled', 'Your Loadline account has been disabled; ask your program admin.', 'account-disabled', { userId: handoff.userId });
      await signIn(req, user);
      // A second token, in case the cookie just set does not come back (a frame that blocks it): /lti/entered tells.
      const fallback = await createHandoff(ctx.db, user.id, handoff.target);
      noStore(res);
      res.redirect(303, `/lti/entered?fallback=${encodeURIComponent(fallback)}`);
    } catch (err) {
      answerRefusal(ctx, req, res, err);
    }
  });

  g.get('/entered', 'public', async (req, res) => {
    try {
      const token = typeof req.query.fallback === 'string' ? req.query.fallback : '';
      const handoff = token ? await peekHandoff(ctx.db, token) : null;
      if (!handoff) throw refuse(400, 'This link has been used', 'The sign-in link of this launch has been used or has expired.', 'handoff-spent');
      noStore(res);
      if (req.session?.userId === handoff.userId) {
        await consumeHandoff(ctx.db, token);
        return res.redirect(303, handoff.target);
      }
      res.type('html').send(openInWindowPage(`/lti/enter?token=${encodeURIComponent(token)}`));
    } catch (err) {
      answerRefusal(ctx, req, res, err);
    }
  });

  // Published at a stable address; platforms fetch it to check what Loadline signs.
  g.get('/jwks.json', 'public', async (_req, res) => {
    res.setHeader('Cache-Control', 'public, max-age=300');
    res.json(await publicKeySet(ctx.db));
  });

  g.get('/page.css', 'public', (_req, res) => {
    res.setHeader('Cache-Control', 'public, max-age=3600');
    res.type('css').send(PAGE_CSS);
  });

  return g;
}

/** The JSON side: registration, keys, deep linking, grade sync and roster sync. */
export function ltiApiRoutes(ctx: AppContext): RouteGroup {
  const g = routeGroup('/api/lti');

  g.get('/tool', ADMIN, async (req, res) => {
    res.json(await toolConfig(ctx));
  });

  g.post('/keys/rotate', ADMIN, async (req, res) => {
    await ctx.db.transaction((tx) => rotateKey(tx));
    res.status(201).json({ keys: await listKeys(ctx.db) });
  });

  g.get('/platforms', ADMIN, async (_req, res) => {
    res.json({ platforms: await listPlatforms(ctx.db) });
  });

  g.post('/platforms', ADMIN, async (req, res) => {
    const input = parseBody(platformInputSchema, req);
    const id = await createPlatform(ctx.db, input);
    forgetFramePolicy(ctx.db);
    res.status(201).json({ platform: (await listPlatforms(ctx.db)).find((p) => p.id === id) });
  });

  g.put('/platforms/:id', ADMIN, async (req, res) => {
    const { id } = parseParams(platformIdParamsSchema, req);
    const input = parseBody(platformInputSchema, req);
    await updatePlatform(ctx.db, id, input);
    forgetFramePolicy(ctx.db);
    res.json({ platform: (await listPlatforms(ctx.db)).find((p) => p.id === id) });
  });

  g.delete('/platforms/:id', ADMIN, async (req, res) => {
    const { id } = parseParams(platformIdParamsSchema, req);
    await deletePlatform(ctx.db, id);
    forgetFramePolicy(ctx.db);
    res.status(204).end();
  });

  g.get('/deep-links/:id', STAFF, async (req, res) => {
    const { id } = parseParams(deepLinkIdParamsSchema, req);
    res.json({ request: await deepLinkRequestOf(ctx.db, currentUser(req), id) });
  });

  g.post('/deep-links/:id', STAFF, async (req, res) => {
    const { id } = parseParams(deepLinkIdParamsSchema, req);
    const choice = parseBody(deepLinkChoiceSchema, req);
    res.status(201).json(await answerDeepLink(ctx, currentUser(req), id, choice, toolBase(ctx)));
  });

  g.get('/assignments/:id/grades', STAFF, async (req, res) => {
    const { id } = parseParams(assignmentIdParamsSchema, req);
    await assertCanManageAssignment(ctx.db, currentUser(req), id);
    res.json(await gradeSyncOf(ctx.db, id));
  });

  g.post('/scores/:id/resend', STAFF, async (req, res) => {
    const { id } = parseParams(outboxIdParamsSchema, req);
    const row = await scoreOutboxRow(ctx.db, id);
    if (!row) throw new HttpError(404, 'No such grade');
    await requireAttemptInstructor(ctx.db, currentUser(req), row.attemptId);
    res.json({ row: await resendScore(ctx, id) });
  });

  g.get('/classes/:id', STAFF, async (req, res) => {
    const { id } = parseParams(classIdParamsSchema, req);
    await assertCanManageClass(ctx.db, currentUser(req), id);
    res.json(await classLinkOf(ctx.db, id));
  });

  g.post('/classes/:id/roster-sync', STAFF, async (req, res) => {
    const { id } = parseParams(classIdParamsSchema, req);
    const user = currentUser(req);
    await assertCanManageClass(ctx.db, user, id);
    res.json(await syncRoster(ctx, user, id));
  });

  return g;
}
