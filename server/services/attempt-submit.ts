/**
 * Submission: check the log is complete, grade (server/services/grade-run.ts,
 * on the grading pool: the model re-run over the stored log up to the
 * submission's sim time, the right verdicts, the curves), then store the
 * readings, diagnosis and result. Time to diagnosis is the sim time of the
 * submission (what the student spent at the bench, pauses and reloads aside).
 *
 * The grading runs with no transaction open and no row locked, so a queue of
 * submissions waiting for the grading workers holds no database connection
 * and stalls no other request. The result is stored in a short transaction
 * that locks the attempt (a batch of events takes the same lock and stores
 * nothing once the attempt is submitted) and first checks that the attempt
 * is still running and its stored log is the one graded. Events are never
 * changed once stored, so the same seqs mean the same log. When a batch
 * arrived meanwhile, the submission is graded again from the new log.
 */
import { eq, sql } from 'drizzle-orm';
import type { AttemptResult, SubmitInput } from '../../shared/api/attempts.ts';
import type { Db } from '../db/client.ts';
import { attemptEvents, attempts } from '../db/schema.ts';
import { badRequest, conflict } from '../http/errors.ts';
import { loadAttempt, showAfter, type AttemptRow } from './attempt-store.ts';
import type { GradeJob } from './grade-run.ts';
import { gradeSubmission } from './grading-pool.ts';
import { loadAttemptRun, type AttemptRunInputs } from './live-attempt-run.ts';

/** The grading job of a submission: the attempt's stored log re-run to the submission, graded as its assignment says. */
export function gradeJobOf(
  attemptId: number,
  attempt: Pick<AttemptRow, 'mode'>,
  run: Pick<AttemptRunInputs, 'definition' | 'seed' | 'events'>,
  show: { showCurveAfter: boolean; showFeedbackAfter: boolean },
  submission: SubmitInput,
): GradeJob {
  return {
    attemptId,
    definition: run.definition,
    seed: run.seed,
    events: run.events,
    submission,
    mode: attempt.mode,
    showFeedback: show.showFeedbackAfter,
    showCurve: show.showCurveAfter,
  };
}

/** How many times a submission is graded again when batches keep arriving while it is graded. */
const SUBMIT_TRIES = 3;

/** Grades a job: the grading pool's, or (tests) one that does something meanwhile. */
export type Grader = (job: GradeJob) => Promise<AttemptResult>;

export async function submitAttempt(db: Db, attemptId: number, input: SubmitInput, grade: Grader = gradeSubmission): Promise<AttemptResult> {
  for (let tries = 1; ; tries++) {
    const stored = await tryStore(db, attemptId, input, grade);
    if (stored) return stored;
    if (tries >= SUBMIT_TRIES) throw conflict('Events are still arriving for this attempt; submit again once they are sent', 'events');
  }
}

/** Grades the attempt's log as it is now and stores the result; null when the log changed while grading. */
async function tryStore(db: Db, attemptId: number, input: SubmitInput, grade: Grader): Promise<AttemptResult | null> {
  const attempt = await loadAttempt(db, attemptId);
  if (attempt.status === 'submitted') throw conflict('This attempt has already been submitted');

  // A running attempt has no diagnosis yet: that is what this stores.
  const run = await loadAttemptRun(db, attemptId, { ...attempt, diagnosis: null });
  const seqs = run.stored.map((s) => s.seq);
  const missing = seqs.findIndex((seq, i) => seq !== i + 1);
  if (missing !== -1) {
    throw conflict(`Events ${missing + 1} to ${seqs[missing]! - 1} have not arrived yet; send them before submitting`, 'events');
  }
  const lastAtMs = run.stored.reduce((m, s) => Math.max(m, s.event.atMs), 0);
  if (input.atMs < lastAtMs) {
    throw badRequest(`atMs: the submission (${input.atMs} ms) is earlier than the last stored event (${lastAtMs} ms)`, { field: 'atMs' });
  }

  const result = await grade(gradeJobOf(attemptId, attempt, run, await showAfter(db, attempt.assignmentId), input));

  return db.transaction(async (tx) => {
    const locked = await loadAttempt(tx, attemptId, { lock: true });
    if (locked.status === 'submitted') throw conflict('This attempt has already been submitted');
    const [log] = await tx
      .select({ n: sql<number>`count(*)::int`, last: sql<number>`coalesce(max(${attemptEvents.seq}), 0)::int` })
      .from(attemptEvents)
      .where(eq(attemptEvents.attemptId, attemptId));
    if (log!.n !== seqs.length || log!.last !== (seqs.at(-1) ?? 0)) return null;
    await tx
      .update(attempts)
      .set({
        status: 'submitted',
        readings: input.readings,
        diagnosis: { atMs: input.atMs, ...input.diagnosis },
        result,
        grade: result.grade,
        verified: result.verified,
        timeToDiagnosisMs: result.timeToDiagnosisMs,
        simTimeMs: Math.max(locked.simTimeMs, input.atMs),
        submittedAt: new Date(),
      })
      .where(eq(attempts.id, attemptId));
    return result;
  });
}
