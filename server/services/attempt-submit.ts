/**
 * Submission: in one transaction with the attempt locked, check the log is
 * complete, grade (server/services/grade-run.ts, on the grading pool: the
 * model re-run over the stored log up to the submission's sim time, the right
 * verdicts, the curves), and store the readings, diagnosis and result. The
 * attempt row stays locked while the grading runs. Time to diagnosis is the
 * sim time of the submission (what the student spent at the bench, pauses and
 * reloads aside).
 */
import { eq } from 'drizzle-orm';
import type { AttemptResult, SubmitInput } from '../../shared/api/attempts.ts';
import type { Db } from '../db/client.ts';
import { attempts } from '../db/schema.ts';
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

export async function submitAttempt(db: Db, attemptId: number, input: SubmitInput): Promise<AttemptResult> {
  return db.transaction(async (tx) => {
    const attempt = await loadAttempt(tx, attemptId, { lock: true });
    if (attempt.status === 'submitted') throw conflict('This attempt has already been submitted');

    // A running attempt has no diagnosis yet: that is what this stores.
    const run = await loadAttemptRun(tx, attemptId, { ...attempt, diagnosis: null });
    const seqs = run.stored.map((s) => s.seq);
    const missing = seqs.findIndex((seq, i) => seq !== i + 1);
    if (missing !== -1) {
      throw conflict(`Events ${missing + 1} to ${seqs[missing]! - 1} have not arrived yet; send them before submitting`, 'events');
    }
    const lastAtMs = run.stored.reduce((m, s) => Math.max(m, s.event.atMs), 0);
    if (input.atMs < lastAtMs) {
      throw badRequest(`atMs: the submission (${input.atMs} ms) is earlier than the last stored event (${lastAtMs} ms)`, { field: 'atMs' });
    }

    const result = await gradeSubmission(gradeJobOf(attemptId, attempt, run, await showAfter(tx, attempt.assignmentId), input));

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
        simTimeMs: Math.max(attempt.simTimeMs, input.atMs),
        submittedAt: new Date(),
      })
      .where(eq(attempts.id, attemptId));
    return result;
  });
}
