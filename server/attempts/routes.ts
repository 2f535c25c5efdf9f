/**
 * /api/attempts: start an attempt, read its bootstrap, post its events,
 * submit it, and a student's own list.
 */
import type { Request } from 'express';
import { rateLimit } from 'express-rate-limit';
import { attemptIdParamsSchema, startAttemptSchema, submitSchema } from '../../shared/api/attempts.ts';
import { benchClockSchema, type BenchClockAnswer } from '../../shared/api/live.ts';
import { attemptReaderAccess } from '../accounts/access.ts';
import { currentUser } from '../accounts/guard.ts';
import type { AppContext } from '../context.ts';
import { PgRateLimitStore } from '../http/rate-limit-store.ts';
import { routeGroup } from '../http/route-table.ts';
import { receivedAt, ServerTiming } from '../http/server-timing.ts';
import { parseBody, parseParams } from '../http/validate.ts';
import { postEvents, requireOwnAttempt } from './events.ts';
import { attemptBootstrap, loadAttemptWithEvents, myAttempts, startAttempt } from './store.ts';
import { reportBenchClock } from './bench-clock.ts';
import { submitAttempt } from './submit.ts';

/** Per student, so a class behind one address shares nothing; counted in PostgreSQL like the sign-in limits. */
function perStudent(ctx: AppContext, name: string, limit: number, message: string, skip?: (req: Request) => boolean) {
  return rateLimit({
    store: new PgRateLimitStore(ctx.pool, `${name}:`),
    windowMs: 60 * 60 * 1000,
    limit,
    keyGenerator: (req) => `user-${currentUser(req).id}`,
    skip,
    standardHeaders: 'draft-8',
    legacyHeaders: false,
    handler: (_req, res) => {
      res.status(429).json({ error: { message } });
    },
  });
}

export function attemptRoutes(ctx: AppContext) {
  const g = routeGroup('/api/attempts');
  // Each attempt is graded by a re-run of the model: a student does not get to choose how much of that the server does.
  const practiceStarts = perStudent(
    ctx,
    'practice-start',
    ctx.env.PRACTICE_STARTS_PER_HOUR,
    `You have started ${ctx.env.PRACTICE_STARTS_PER_HOUR} practice runs in the last hour; finish one of them, or wait a while`,
    (req) => (req.body as { mode?: unknown } | undefined)?.mode !== 'practice',
  );
  const submissions = perStudent(ctx, 'submit', ctx.env.SUBMISSIONS_PER_HOUR, `You have sent ${ctx.env.SUBMISSIONS_PER_HOUR} submissions in the last hour; wait a while before the next`);

  g.post('/', ['student'], practiceStarts, async (req, res) => {
    const input = parseBody(startAttemptSchema, req);
    const id = await startAttempt(ctx.db, currentUser(req), input);
    res.status(201).json(await attemptBootstrap(ctx, id));
  });

  g.get('/mine', ['student'], async (req, res) => {
    res.json({ attempts: await myAttempts(ctx.db, currentUser(req).id) });
  });

  g.get('/:id', 'signed-in', async (req, res) => {
    const { id } = parseParams(attemptIdParamsSchema, req);
    const read = await loadAttemptWithEvents(ctx, id);
    const { attempt } = read;
    const access = await attemptReaderAccess(ctx.db, currentUser(req), { attemptId: id, ownerId: attempt.userId, assignmentId: attempt.assignmentId, status: attempt.status });
    res.json(await attemptBootstrap(ctx, read, { isOwner: access.isOwner }));
  });

  // The owner is checked from memory (requireOwnAttempt), and again by the statement that stores the batch.
  g.post('/:id/events', ['student'], async (req, res) => {
    const { id } = parseParams(attemptIdParamsSchema, req);
    res.json(await postEvents(ctx, currentUser(req), id, req.body ?? {}));
  });

  // The open bench's clock, for the class board: stored only while the attempt runs. The answer says
  // whether it still does, so a bench left open on one device stops once the attempt is submitted on another.
  g.post('/:id/clock', ['student'], async (req, res) => {
    const { id } = parseParams(attemptIdParamsSchema, req);
    const user = currentUser(req);
    await requireOwnAttempt(ctx, user, id);
    const { simTimeMs } = parseBody(benchClockSchema, req);
    const answer: BenchClockAnswer = { running: await reportBenchClock(ctx.pool, id, user.id, simTimeMs) };
    res.json(answer);
  });

  // The owner never changes, so it is checked from memory (requireOwnAttempt); the submission itself runs on the locked row.
  // Its answer says how long reading, grading and storing took (Server-Timing), as grading is what a class waits for at the end of a lab.
  g.post('/:id/submit', ['student'], submissions, async (req, res) => {
    const arrived = receivedAt(res);
    const timing = new ServerTiming(arrived);
    // Reading the body, the session and the user.
    timing.add('before', performance.now() - arrived);
    const { id } = parseParams(attemptIdParamsSchema, req);
    await requireOwnAttempt(ctx, currentUser(req), id);
    const input = parseBody(submitSchema, req);
    const result = await submitAttempt(ctx.db, id, input, { timing });
    res.setHeader('Server-Timing', timing.header());
    res.json(result);
  });

  return g;
}
