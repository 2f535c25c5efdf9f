/**
 * Attempts in the database: starting one (an assignment's own scenario
 * version, or the one its pool draws for the student), the bootstrap the
 * bench runs from, and a student's list. The bootstrap sends the car to
 * simulate, compiled: never the fault list (docs/decisions/001-sealed-faults.md).
 */
import { createHash, randomInt } from 'node:crypto';
import type pg from 'pg';
import { and, asc, desc, eq, sql } from 'drizzle-orm';
import type { SessionUser } from '../../shared/api/auth.ts';
import type { AttemptBootstrap, AttemptResult, MyAttemptRow, StartAttemptInput, StoredEvent } from '../../shared/api/attempts.ts';
import { attemptResultSchema, benchScenarioView } from '../../shared/api/attempts.ts';
import type { ScenarioDefinition } from '../../shared/scenario.ts';
import { assertCanPractiseScenario, assertCanStartAssignment } from '../accounts/access.ts';
import type { Db, DbOrTx } from '../db/client.ts';
import { assignmentPool, assignments, attempts, scenarioVersions } from '../db/schema.ts';
import { scopedCache } from '../db/scoped-cache.ts';
import { notFound } from '../http/errors.ts';
import { extensionOf, termsFor } from '../assignments/terms.ts';
import { loadDefinition } from '../library/definitions.ts';
import { carOf, rowToLogEvent } from './rerun-inputs.ts';
import { hiddenFor, studentGrade, studentResult, type ResultShowing } from '../grading/result-views.ts';

export interface AttemptRow {
  id: number;
  userId: number;
  scenarioVersionId: number;
  assignmentId: number | null;
  mode: 'assigned' | 'practice';
  seed: number;
  status: 'running' | 'submitted';
  lastSeq: number;
  simTimeMs: number;
  result: unknown;
  startedAt: Date;
}

const attemptColumns = {
  id: attempts.id,
  userId: attempts.userId,
  scenarioVersionId: attempts.scenarioVersionId,
  assignmentId: attempts.assignmentId,
  mode: attempts.mode,
  seed: attempts.seed,
  status: attempts.status,
  lastSeq: attempts.lastSeq,
  simTimeMs: attempts.simTimeMs,
  result: attempts.result,
  startedAt: attempts.startedAt,
};

/** A stored row with its mode and status narrowed to the values the product knows. */
function asAttemptRow(row: Omit<AttemptRow, 'mode' | 'status'> & { mode: string; status: string }): AttemptRow {
  return { ...row, mode: row.mode === 'practice' ? 'practice' : 'assigned', status: row.status === 'submitted' ? 'submitted' : 'running' };
}

export async function loadAttempt(db: DbOrTx, attemptId: number, opts: { lock?: boolean } = {}): Promise<AttemptRow> {
  const q = db.select(attemptColumns).from(attempts).where(eq(attempts.id, attemptId));
  const [row] = opts.lock ? await q.for('update') : await q;
  if (!row) throw notFound('No such attempt');
  return asAttemptRow(row);
}

/** What an attempt's assignment shows after submission, and when (practice shows what a live car would, at once). */
export interface AttemptShowing {
  showCurveAfter: boolean;
  showFeedbackAfter: boolean;
  /** The assignment's due date: a result hidden until it closes shows then. */
  dueAt: Date | null;
}

/** What the assignment shows after submission. */
export async function showAfter(db: DbOrTx, assignmentId: number | null): Promise<AttemptShowing> {
  if (assignmentId === null) return { showCurveAfter: true, showFeedbackAfter: true, dueAt: null };
  const [row] = await db
    .select({ showCurveAfter: assignments.showCurveAfter, showFeedbackAfter: assignments.showFeedbackAfter, dueAt: assignments.dueAt })
    .from(assignments)
    .where(eq(assignments.id, assignmentId));
  return row ?? { showCurveAfter: true, showFeedbackAfter: true, dueAt: null };
}

/** An attempt's row and what its assignment shows after submission (as `showAfter`), in one query. */
export async function loadAttemptShowing(db: DbOrTx, attemptId: number): Promise<{ attempt: AttemptRow; show: AttemptShowing }> {
  const [row] = await db
    .select({
      ...attemptColumns,
      showCurveAfter: sql<boolean>`coalesce(${assignments.showCurveAfter}, true)`,
      showFeedbackAfter: sql<boolean>`coalesce(${assignments.showFeedbackAfter}, true)`,
      dueAt: assignments.dueAt,
    })
    .from(attempts)
    .leftJoin(assignments, eq(assignments.id, attempts.assignmentId))
    .where(eq(attempts.id, attemptId));
  if (!row) throw notFound('No such attempt');
  const { showCurveAfter, showFeedbackAfter, dueAt, ...attempt } = row;
  return { attempt: asAttemptRow(attempt), show: { showCurveAfter, showFeedbackAfter, dueAt } };
}

/** How an attempt's result is shown to its student. */
export const resultShowing = (attempt: Pick<AttemptRow, 'mode'>, show: AttemptShowing): ResultShowing => ({
  mode: attempt.mode,
  showFeedbackAfter: show.showFeedbackAfter,
  dueAt: show.dueAt,
});

/** A random 31-bit seed for the model's generator. */
export const newSeed = (): number => randomInt(0, 2 ** 31);

/**
 * The pool draw: which of `n` pool entries a student gets, fixed by the
 * assignment's pool seed and the student, so every attempt of theirs runs the
 * same car and neighbours mostly do not.
 */
export function poolIndex(poolSeed: number, userId: number, n: number): number {
  const digest = createHash('sha256').update(`loadline-pool:${poolSeed}:${userId}`).digest();
  return digest.readUInt32BE(0) % n;
}

/** The scenario version an assignment gives a student: its own, or its pool's draw for them. */
export async function drawnVersion(db: DbOrTx, assignment: { id: number; scenarioVersionId: number; poolSeed: number }, userId: number): Promise<number> {
  const pool = await db
    .select({ versionId: assignmentPool.scenarioVersionId })
    .from(assignmentPool)
    .where(eq(assignmentPool.assignmentId, assignment.id))
    .orderBy(asc(assignmentPool.position), asc(assignmentPool.scenarioVersionId));
  if (pool.length === 0) return assignment.scenarioVersionId;
  return pool[poolIndex(assignment.poolSeed, userId, pool.length)]!.versionId;
}

/**
 * Starts an attempt: of an assignment (enrolled, open, not past due, attempts
 * left) or a practice run of a published scenario. The assignment's row is
 * locked while counting, so two starts at once cannot pass the limit.
 */
export async function startAttempt(db: Db, user: SessionUser, input: StartAttemptInput): Promise<number> {
  return db.transaction(async (tx) => {
    if ('assignmentId' in input) {
      await tx.select({ id: assignments.id }).from(assignments).where(eq(assignments.id, input.assignmentId)).for('update');
      const [used] = await tx
        .select({ n: sql<number>`count(*)::int` })
        .from(attempts)
        .where(and(eq(attempts.assignmentId, input.assignmentId), eq(attempts.userId, user.id)));
      const assignment = await assertCanStartAssignment(tx, user, input.assignmentId, used?.n ?? 0, new Date(), async (row) =>
        termsFor(row, await extensionOf(tx, row.id, user.id)),
      );
      const scenarioVersionId = await drawnVersion(tx, assignment, user.id);
      const [row] = await tx
        .insert(attempts)
        .values({ userId: user.id, scenarioVersionId, assignmentId: assignment.id, mode: 'assigned', seed: newSeed() })
        .returning({ id: attempts.id });
      return row!.id;
    }
    const { scenarioVersionId } = await assertCanPractiseScenario(tx, user, input.scenarioId);
    const [row] = await tx
      .insert(attempts)
      .values({ userId: user.id, scenarioVersionId, assignmentId: null, mode: 'practice', seed: newSeed() })
      .returning({ id: attempts.id });
    return row!.id;
  });
}

/**
 * The stored log of each attempt read here, events 1..throughSeq: an event
 * is stored once under its seq and never changes, so a prefix without gaps,
 * once read, holds for good, and a later read fetches only what follows it.
 */
const keptLogs = scopedCache<number, { throughSeq: number; events: readonly StoredEvent[] }>(1_000);

/**
 * An attempt's row and its whole stored log in one named statement, which
 * fetches only the events after the prefix this process already holds.
 */
export async function loadAttemptWithEvents(ctx: { db: Db; pool: pg.Pool }, attemptId: number): Promise<{ attempt: AttemptRow; events: StoredEvent[] }> {
  const cache = keptLogs.of(ctx.db);
  const kept = cache?.get(attemptId) ?? { throughSeq: 0, events: [] };
  const { rows } = await ctx.pool.query<Omit<AttemptRow, 'mode' | 'status'> & { mode: string; status: string; after: [number, string, number, unknown][] }>({
    name: 'attempt-with-events',
    text: `select a.id, a.user_id as "userId", a.scenario_version_id as "scenarioVersionId", a.assignment_id as "assignmentId",
                  a.mode, a.seed, a.status, a.last_seq as "lastSeq", a.sim_time_ms as "simTimeMs", a.result, a.started_at as "startedAt",
                  (select coalesce(json_agg(json_build_array(e.seq, e.kind, e.sim_time_ms, e.payload) order by e.seq), '[]')
                     from attempt_events e where e.attempt_id = a.id and e.seq > $2) as after
             from attempts a where a.id = $1`,
    values: [attemptId, kept.throughSeq],
  });
  const row = rows[0];
  if (!row) throw notFound('No such attempt');
  const { after, ...rest } = row;
  const attempt = asAttemptRow(rest);
  const fresh = after.flatMap(([seq, kind, simTimeMs, payload]) => {
    const event = rowToLogEvent({ kind, simTimeMs, payload });
    return event ? [{ seq, event }] : [];
  });
  const events = kept.events.length ? [...kept.events, ...fresh] : fresh;
  // The row's lastSeq, read in the same snapshot, says how far the log has no gaps.
  if (cache && attempt.lastSeq > kept.throughSeq) {
    cache.set(attemptId, { throughSeq: attempt.lastSeq, events: events.filter((e) => e.seq <= attempt.lastSeq) });
  }
  return { attempt, events };
}

/**
 * The diagnosis choices of every version of an assignment's fault pool, in
 * the catalog's order (null without a pool): the bench offers them all, so the
 * list says nothing of which car was drawn.
 */
export async function poolChoices(db: DbOrTx, assignmentId: number | null): Promise<ScenarioDefinition['diagnosisChoices'] | null> {
  if (assignmentId === null) return null;
  const pool = await db.select({ versionId: assignmentPool.scenarioVersionId }).from(assignmentPool).where(eq(assignmentPool.assignmentId, assignmentId));
  if (pool.length === 0) return null;
  const defs = await Promise.all(pool.map((p) => loadDefinition(db, p.versionId)));
  return [...new Set(defs.flatMap((d) => d.diagnosisChoices))];
}

export function storedResult(raw: unknown): AttemptResult | null {
  if (raw === null || raw === undefined) return null;
  const parsed = attemptResultSchema.safeParse(raw);
  return parsed.success ? parsed.data : null;
}

/** Who reads a bootstrap: its student sees the result as grading/result-views.ts allows; instructors see it whole. */
export interface BootstrapReader {
  isOwner: boolean;
}

/** The bootstrap of an attempt, by id or from its row and log already read. */
export async function attemptBootstrap(
  ctx: { db: Db; pool: pg.Pool },
  attempt: number | { attempt: AttemptRow; events: readonly StoredEvent[] },
  reader: BootstrapReader = { isOwner: true },
): Promise<AttemptBootstrap> {
  const { db } = ctx;
  const { attempt: a, events } = typeof attempt === 'number' ? await loadAttemptWithEvents(ctx, attempt) : attempt;
  const def = await loadDefinition(db, a.scenarioVersionId);
  const show = await showAfter(db, a.assignmentId);
  const showing = resultShowing(a, show);
  const hidden = hiddenFor(showing);
  const stored = a.status === 'submitted' ? storedResult(a.result) : null;
  return {
    attempt: {
      id: a.id,
      mode: a.mode,
      status: a.status,
      seed: a.seed,
      startedAt: a.startedAt.toISOString(),
      assignmentId: a.assignmentId,
      lastSeq: a.lastSeq,
      showCurveAfter: show.showCurveAfter,
      showFeedbackAfter: show.showFeedbackAfter,
      resultsAt: hidden?.reason === 'until-close' ? hidden.until : null,
    },
    scenario: benchScenarioView(def, await poolChoices(db, a.assignmentId)),
    car: carOf(def),
    events: [...events],
    result: stored && reader.isOwner ? studentResult(stored, showing) : stored,
  };
}

export async function myAttempts(db: DbOrTx, userId: number): Promise<MyAttemptRow[]> {
  const now = new Date();
  const rows = await db
    .select({
      id: attempts.id,
      scenarioTitle: scenarioVersions.title,
      mode: attempts.mode,
      status: attempts.status,
      startedAt: attempts.startedAt,
      submittedAt: attempts.submittedAt,
      timeToDiagnosisMs: attempts.timeToDiagnosisMs,
      grade: attempts.grade,
      assignmentTitle: assignments.title,
      showFeedbackAfter: assignments.showFeedbackAfter,
      dueAt: assignments.dueAt,
    })
    .from(attempts)
    .innerJoin(scenarioVersions, eq(scenarioVersions.id, attempts.scenarioVersionId))
    .leftJoin(assignments, eq(assignments.id, attempts.assignmentId))
    .where(eq(attempts.userId, userId))
    .orderBy(desc(attempts.startedAt), desc(attempts.id));
  return rows.map((r) => {
    const mode = r.mode === 'practice' ? 'practice' : 'assigned';
    const showing: ResultShowing = { mode, showFeedbackAfter: r.showFeedbackAfter ?? true, dueAt: r.dueAt };
    const hidden = hiddenFor(showing, now);
    return {
      id: r.id,
      scenarioTitle: r.scenarioTitle,
      mode,
      status: r.status === 'submitted' ? 'submitted' : 'running',
      startedAt: r.startedAt.toISOString(),
      submittedAt: r.submittedAt ? r.submittedAt.toISOString() : null,
      timeToDiagnosisMs: r.timeToDiagnosisMs,
      grade: studentGrade(r.grade, showing, now),
      assignmentTitle: r.assignmentTitle,
      resultsAt: hidden?.reason === 'until-close' ? hidden.until : null,
    };
  });
}
