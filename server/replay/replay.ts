/**
 * A submitted attempt's replay, the domain's part: the re-run's events, the
 * readings and markers, the labels of the car's changes, and the comments.
 */
import { asc, eq } from 'drizzle-orm';
import type { ReplayComment, ReplayResponse } from '../../shared/api/replay.ts';
import type { DbOrTx } from '../db/client.ts';
import { assignments, attempts, comments, scenarioVersions, users } from '../db/schema.ts';
import { conflict } from '../http/errors.ts';
import { FAULT_TEXT } from '../../shared/fault-catalogue-text.ts';
import { isPermanent } from '../../sim/compiled-car.ts';
import { storedResult } from '../attempts/store.ts';
import { loadAttemptRun, serverRunOf, type AttemptRunInputs } from '../attempts/rerun-inputs.ts';
import { replayMarkers, replayReadings } from './markers.ts';
import { hiddenFor, studentResult, type ResultShowing } from '../grading/result-views.ts';

export async function commentsOf(db: DbOrTx, attemptId: number): Promise<ReplayComment[]> {
  const rows = await db
    .select({ id: comments.id, simTimeMs: comments.simTimeMs, body: comments.body, authorName: users.name, createdAt: comments.createdAt })
    .from(comments)
    .innerJoin(users, eq(users.id, comments.authorId))
    .where(eq(comments.attemptId, attemptId))
    .orderBy(asc(comments.simTimeMs), asc(comments.id));
  return rows.map((r) => ({ ...r, createdAt: r.createdAt.toISOString() }));
}

/** What each change of the car stands for: the scenario's scheduled faults (c1, c2 …) and the instructor's injections. */
function changeLabelsOf(run: AttemptRunInputs): Record<string, string> {
  const out: Record<string, string> = {};
  run.definition.faults.filter((f) => !isPermanent(f)).forEach((f, i) => (out[`c${i + 1}`] = FAULT_TEXT[f.kind].label));
  for (const r of run.injections) if (r.action.type === 'inject') out[r.action.faultId] = FAULT_TEXT[r.action.kind].label;
  return out;
}

/**
 * The faults of the car the attempt ran: the scenario's own, permanent or
 * scheduled, whatever the stored result says (an attempt stored without one
 * still names them). The instructor's injections are not the car's: they are
 * named by the change labels.
 */
const carFaultLabelsOf = (run: AttemptRunInputs): string[] => [...new Set(run.definition.faults.map((f) => FAULT_TEXT[f.kind].label))];
/** The hints the log shows opened (each the first time), up to the submission. */
function hintsOpenedIn(stored: AttemptRunInputs['stored'], untilMs: number | null): { atMs: number; index: number }[] {
  const seen = new Set<number>();
  const out: { atMs: number; index: number }[] = [];
  for (const { event: e } of stored) {
    if (e.kind !== 'hint' || seen.has(e.index) || (untilMs !== null && e.atMs > untilMs)) continue;
    seen.add(e.index);
    out.push({ atMs: e.atMs, index: e.index });
  }
  return out;
}

/** A submitted attempt's replay as the viewer may see it (its student: as grading/result-views.ts allows). */
export async function replayOf(db: DbOrTx, attemptId: number, viewer: { isOwner: boolean }): Promise<Omit<ReplayResponse, 'canComment' | 'comments'>> {
  const run = await loadAttemptRun(db, attemptId);
  if (run.status !== 'submitted') throw conflict('Only a submitted attempt can be replayed', 'id');
  const [a] = await db
    .select({
      studentId: attempts.userId,
      studentName: users.name,
      scenarioTitle: scenarioVersions.title,
      assignmentTitle: assignments.title,
      mode: attempts.mode,
      readings: attempts.readings,
      result: attempts.result,
      showFeedbackAfter: assignments.showFeedbackAfter,
      dueAt: assignments.dueAt,
    })
    .from(attempts)
    .innerJoin(users, eq(users.id, attempts.userId))
    .innerJoin(scenarioVersions, eq(scenarioVersions.id, attempts.scenarioVersionId))
    .leftJoin(assignments, eq(assignments.id, attempts.assignmentId))
    .where(eq(attempts.id, attemptId));
  const stored = storedResult(a!.result);
  const showing: ResultShowing = { mode: a!.mode === 'practice' ? 'practice' : 'assigned', showFeedbackAfter: a!.showFeedbackAfter ?? true, dueAt: a!.dueAt };
  const hidden = viewer.isOwner ? hiddenFor(showing) : null;
  const result = stored && viewer.isOwner ? studentResult(stored, showing) : stored;
  const server = serverRunOf(run, { now: new Date(), closing: true });
  const readings = replayReadings(result?.readings ?? null, a!.readings);
  const lastEventMs = server.events.reduce((m, e) => Math.max(m, e.atMs), 0);
  const lastReadingMs = readings.reduce((m, r) => Math.max(m, r.atMs), 0);
  const durationMs = Math.ceil(Math.max(run.submittedAtMs ?? 0, lastEventMs, lastReadingMs));
  const changeLabels = hidden ? {} : changeLabelsOf(run);
  const submittedAtMs = run.submittedAtMs === null ? null : Math.round(run.submittedAtMs);
  return {
    attempt: {
      id: attemptId,
      studentId: a!.studentId,
      studentName: a!.studentName,
      scenarioTitle: a!.scenarioTitle,
      assignmentTitle: a!.assignmentTitle,
      seed: run.seed,
      durationMs,
      submittedAtMs,
      grade: result?.grade ?? null,
      resultsAt: hidden?.reason === 'until-close' ? hidden.until : null,
    },
    car: run.car,
    events: server.events,
    faultLabels: hidden ? [] : carFaultLabelsOf(run),
    changeLabels,
    markers: replayMarkers(server.events, readings, submittedAtMs, changeLabels, run.definition.vehicle.params.loads.accessories, hintsOpenedIn(run.stored, submittedAtMs)),
    readings,
  };
}

/** Stores an instructor's comment on a moment of the attempt; returns its id. */
export async function addComment(db: DbOrTx, attemptId: number, authorId: number, input: { simTimeMs: number; body: string }): Promise<number> {
  const [row] = await db.insert(comments).values({ attemptId, authorId, simTimeMs: input.simTimeMs, body: input.body }).returning({ id: comments.id });
  return row!.id;
}
