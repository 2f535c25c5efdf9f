/**
 * Replays (/api/replay): a submitted attempt for its student and its
 * instructors, with markers and comments; instructors comment on moments.
 */
import { createCommentSchema, replayParamsSchema, type ReplayResponse } from '../../shared/api/replay.ts';
import { requireAttemptInstructor, requireAttemptReader } from '../accounts/access.ts';
import { currentUser } from '../accounts/guard.ts';
import type { AppContext } from '../context.ts';
import { badRequest } from '../http/errors.ts';
import { routeGroup } from '../http/route-table.ts';
import { parseBody, parseParams } from '../http/validate.ts';
import { addComment, commentsOf, replayOf } from './replay.ts';

export function replayRoutes(ctx: AppContext) {
  const g = routeGroup('/api/replay');

  g.get('/attempts/:id', ['student', 'instructor', 'admin'], async (req, res) => {
    const { id } = parseParams(replayParamsSchema, req);
    const access = await requireAttemptReader(ctx.db, currentUser(req), id);
    const body: ReplayResponse = { ...(await replayOf(ctx.db, id, access)), comments: await commentsOf(ctx.db, id), canComment: access.teaches };
    res.json(body);
  });

  g.get('/attempts/:id/comments', ['student', 'instructor', 'admin'], async (req, res) => {
    const { id } = parseParams(replayParamsSchema, req);
    await requireAttemptReader(ctx.db, currentUser(req), id);
    res.json({ comments: await commentsOf(ctx.db, id) });
  });

  g.post('/attempts/:id/comments', ['instructor', 'admin'], async (req, res) => {
    const { id } = parseParams(replayParamsSchema, req);
    const user = currentUser(req);
    await requireAttemptInstructor(ctx.db, user, id);
    const input = parseBody(createCommentSchema, req);
    const replay = await replayOf(ctx.db, id, { isOwner: false });
    if (input.simTimeMs > replay.attempt.durationMs) {
      throw badRequest(`simTimeMs: the attempt lasts ${replay.attempt.durationMs} ms of sim time`, { field: 'simTimeMs' });
    }
    const commentId = await addComment(ctx.db, id, user.id, input);
    const created = (await commentsOf(ctx.db, id)).find((c) => c.id === commentId);
    res.status(201).json({ comment: created });
  });

  return g;
}
