/**
 * Live class sessions (/api/live): the instructor's board of running attempts
 * and its stream, fault injection and clearing, and the bench's own stream of
 * injections. Streams are Server-Sent Events fed by LISTEN/NOTIFY, so a
 * student on one server process and the instructor on another see each other.
 */
import { attemptParamsSchema, classParamsSchema, clearSchema, injectSchema } from '../../shared/api/live.ts';
import { requireAttemptInstructor, requireAttemptOwner, requireClassInstructor } from '../accounts/access.ts';
import { currentUser } from '../accounts/guard.ts';
import type { AppContext } from '../context.ts';
import { conflict } from '../http/errors.ts';
import { routeGroup } from '../http/route-table.ts';
import { parseBody, parseParams } from '../http/validate.ts';
import { liveBusFor } from '../db/live-bus.ts';
import { feedBench } from './bench-stream.ts';
import { className, createBoardRuns } from './board.ts';
import { boardSnapshot, feedBoard } from './board-stream.ts';
import { createClear, createInjection, injectionViews, listInjections, resolveRows } from './injections.ts';
import { loadStoredInputs } from '../attempts/rerun-inputs.ts';
import { openSse } from './sse.ts';

const INSTRUCTORS = ['instructor', 'admin'] as const;

export function liveRoutes(ctx: AppContext) {
  const g = routeGroup('/api/live');
  const runs = createBoardRuns((message, err) => ctx.log('warn', message, err));

  // A class that does not exist is named as such (404) before whether the user teaches it (403).
  g.get('/classes/:classId/board', INSTRUCTORS, async (req, res) => {
    const { classId } = parseParams(classParamsSchema, req);
    await className(ctx.db, classId);
    await requireClassInstructor(ctx.db, currentUser(req), classId);
    res.json(await boardSnapshot(ctx.db, classId, runs));
  });

  g.get('/classes/:classId/stream', INSTRUCTORS, async (req, res) => {
    const { classId } = parseParams(classParamsSchema, req);
    await className(ctx.db, classId);
    await requireClassInstructor(ctx.db, currentUser(req), classId);
    const first = await boardSnapshot(ctx.db, classId, runs);
    const sse = openSse(req, res);
    await feedBoard({ db: ctx.db, bus: liveBusFor(ctx), runs, log: ctx.log, recheckSeconds: ctx.env.BOARD_RECHECK_SECONDS }, classId, sse, first);
  });

  g.get('/attempts/:id/injections', INSTRUCTORS, async (req, res) => {
    const { id } = parseParams(attemptParamsSchema, req);
    await requireAttemptInstructor(ctx.db, currentUser(req), id);
    const [rows, stored] = await Promise.all([listInjections(ctx.db, id), loadStoredInputs(ctx.db, id)]);
    res.json({ injections: injectionViews(rows, resolveRows(rows, stored)) });
  });

  g.post('/attempts/:id/inject', INSTRUCTORS, async (req, res) => {
    const { id } = parseParams(attemptParamsSchema, req);
    const user = currentUser(req);
    await requireAttemptInstructor(ctx.db, user, id);
    const body = parseBody(injectSchema, req);
    const row = await createInjection(ctx.db, id, user.id, body);
    res.status(201).json({ injection: injectionViews([row])[0] });
  });

  g.post('/attempts/:id/clear', INSTRUCTORS, async (req, res) => {
    const { id } = parseParams(attemptParamsSchema, req);
    const user = currentUser(req);
    await requireAttemptInstructor(ctx.db, user, id);
    const body = parseBody(clearSchema, req);
    const row = await createClear(ctx.db, id, user.id, body.injectionId);
    const all = await listInjections(ctx.db, id);
    res.status(201).json({ injection: injectionViews(all).find((v) => v.injectionId === row.id) });
  });

  // The bench's stream of the injections not yet logged, then the attempt's end (live/bench-stream.ts).
  g.get('/attempts/:id/stream', ['student'], async (req, res) => {
    const { id } = parseParams(attemptParamsSchema, req);
    const access = await requireAttemptOwner(ctx.db, currentUser(req), id);
    if (access.status !== 'running') throw conflict('The attempt is no longer running', 'id');
    const sse = openSse(req, res);
    await feedBench({ db: ctx.db, bus: liveBusFor(ctx), log: ctx.log }, id, sse);
  });

  return g;
}
