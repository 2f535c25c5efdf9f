/**
 * Replays (/api/replay): a submitted attempt for its student and its
 * instructors, with markers and comments; instructors comment on moments.
 */
import { asc, eq } from 'drizzle-orm';
import { createCommentSchema, replayParamsSchema, type ReplayComment, type ReplayResponse } from '../../shared/api/replay.ts';
import { requireAttemptInstructor, requireAttemptReader } from '../auth/access.ts';
import { currentUser } from '../auth/guard.ts';
import type { AppContext } from '../context.ts';
import type { DbOrTx } from '../db/client.ts';
import { assignments, attempts, comments, scenarioVersions, users } from '../db/schema.ts';
import { badRequest, conflict } from '../http/errors.ts';
import { routeGroup } from '../http/route-table.ts';
import { parseBody, parseParams } from '../http/validate.ts';
import { loadAttemptRun } from '../services/live-attempt-run.ts';
import { replayMarkers, storedReadings } from '../services/live-replay.ts';

async function commentsOf(db: DbOrTx, attemptId: number): Promise<ReplayComment[]> {
  const rows = await db
    .select({ id: comments.id, simTimeMs: comments.simTimeMs, body: comments.body, authorName: users.name, createdAt: comments.createdAt })
    .from(comments)
    .innerJoin(users, eq(users.id, comments.authorId))
    .where(eq(comments.attemptId, attemptId))
    .orderBy(asc(comments.simTimeMs), asc(comments.id));
  return rows.map((r) => ({ ...r, createdAt: r.createdAt.toISOString() }));
}

async function replayOf(db: DbOrTx, attemptId: number): Promise<Omit<ReplayResponse, 'canComment' | 'comments'>> {
  const run = await loadAttemptRun(db, attemptId);
  if (run.status !== 'submitted') throw conflict('Only a submitted attempt can be replayed', 'id');
  const [a] = await db
    .select({
      studentId: attempts.userId,
      studentName: users.name,
      scenarioTitle: scenarioVersions.title,
      assignmentTitle: assignments.title,
      grade: attempts.grade,
      readings: attempts.readings,
      diagnosis: attempts.diagnosis,
    })
    .from(attempts)
    .innerJoin(users, eq(users.id, attempts.userId))
    .innerJoin(scenarioVersions, eq(scenarioVersions.id, attempts.scenarioVersionId))
    .leftJoin(assignments, eq(assignments.id, attempts.assignmentId))
    .where(eq(attempts.id, attemptId));
  const readings = storedReadings(a!.readings ?? a!.diagnosis);
  const lastEventMs = run.events.reduce((m, e) => Math.max(m, e.atMs), 0);
  const lastReadingMs = readings.reduce((m, r) => Math.max(m, r.atMs), 0);
  const durationMs = Math.ceil(Math.max(run.submittedAtMs ?? 0, lastEventMs, lastReadingMs));
  return {
    attempt: {
      id: attemptId,
      studentId: a!.studentId,
      studentName: a!.studentName,
      scenarioTitle: a!.scenarioTitle,
      assignmentTitle: a!.assignmentTitle,
      seed: run.seed,
      durationMs,
      submittedAtMs: run.submittedAtMs === null ? null : Math.round(run.submittedAtMs),
      grade: a!.grade,
    },
    vehicle: run.params,
    events: run.events,
    markers: replayMarkers(run.stored, readings, run.submittedAtMs === null ? null : Math.round(run.submittedAtMs), run.params.loads.accessories),
    readings,
  };
}

export function replayRoutes(ctx: AppContext) {
  const g = routeGroup('/api/replay');

  g.get('/attempts/:id', ['student', 'instructor', 'admin'], async (req, res) => {
    const { id } = parseParams(replayParamsSchema, req);
    const access = await requireAttemptReader(ctx.db, currentUser(req), id);
    const body: ReplayResponse = { ...(await replayOf(ctx.db, id)), comments: await commentsOf(ctx.db, id), canComment: access.teaches };
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
    const replay = await replayOf(ctx.db, id);
    if (input.simTimeMs > replay.attempt.durationMs) {
      throw badRequest(`simTimeMs: the attempt lasts ${replay.attempt.durationMs} ms of sim time`, { field: 'simTimeMs' });
    }
    const [row] = await ctx.db.insert(comments).values({ attemptId: id, authorId: user.id, simTimeMs: input.simTimeMs, body: input.body }).returning({ id: comments.id });
    const created = (await commentsOf(ctx.db, id)).find((c) => c.id === row!.id);
    res.status(201).json({ comment: created });
  });

  return g;
}
