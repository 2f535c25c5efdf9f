/**
 * Submission: check the log is complete, grade (server/grading/grade-run.ts,
 * on the grading pool: the attempt's compiled car re-run over the stored log,
 * with the instructor's injections where the server says they were delivered,
 * up to the submission's sim time; the right verdicts; the curves), then
 * store the readings of the log, the diagnosis and the result, and answer
 * with the result as the student may see it (grading/result-views.ts). Time to
 * diagnosis is the sim time of the submission (what the student spent at the
 * bench, pauses and reloads aside).
 *
 * The grading runs with no transaction open and no row locked, so a queue of
 * submissions waiting for the grading workers holds no database connection
 * and stalls no other request. The result is stored by one database call
 * (one round trip: under load each round trip waits its turn on the event
 * loop) that locks the attempt (a batch of events takes the same lock and
 * stores nothing once the attempt is submitted) and first checks that the
 * attempt is still running and its stored log is the one graded. Events are
 * never changed once stored, so the same seqs mean the same log. When a
 * batch arrived meanwhile, the submission is graded again from the new log.
 * The attempt and its log are read at once, for the same reason.
 *
 * With a `ServerTiming`, the parts are timed: `read` (the attempt and its
 * log), `grade` (waiting for a grading worker and grading), `worker` (the
 * grading itself, inside the worker) and `store`.
 */
import { sql } from 'drizzle-orm';
import type { AttemptResult, RecordedReading, SubmitInput } from '../../shared/api/attempts.ts';
import type { Db } from '../db/client.ts';
import { hintsOfLog, MAX_READINGS } from '../../shared/api/attempts.ts';
import { queueScoresForAttempt } from '../lti/scores.ts';
import { badRequest, conflict, notFound } from '../http/errors.ts';
import type { ServerTiming } from '../http/server-timing.ts';
import { loadAttemptShowing, resultShowing, type AttemptRow, type AttemptShowing } from './store.ts';
import { loadDefinition } from '../library/definitions.ts';
import type { GradeJob } from '../grading/grade-run.ts';
import { gradeSubmission, type OnWorkerMs } from '../grading/pool.ts';
import { attemptRunOf, faultsAt, loadInjectionRecords, loadStoredInputs, serverRunOf, type AttemptRunInputs } from './rerun-inputs.ts';
import { studentResult } from '../grading/result-views.ts';

/**
 * The grading job of a submission: the attempt's stored log re-run to the
 * submission on its compiled car, graded as its assignment says. The stored
 * result is whole (feedback included); what the student sees of it is
 * decided when it is read.
 */
export function gradeJobOf(
  attemptId: number,
  attempt: Pick<AttemptRow, 'mode'>,
  run: Pick<AttemptRunInputs, 'definition' | 'car' | 'seed' | 'stored' | 'injections'>,
  show: Pick<AttemptShowing, 'showCurveAfter'>,
  submission: SubmitInput,
  now = new Date(),
): GradeJob {
  const server = serverRunOf(run, { now, closing: true });
  return {
    attemptId,
    definition: run.definition,
    car: run.car,
    seed: run.seed,
    events: server.events,
    readings: server.readings.slice(0, MAX_READINGS),
    submission,
    faults: faultsAt(run, server.resolved, submission.atMs),
    flags: server.flags,
    mode: attempt.mode,
    showFeedback: true,
    showCurve: show.showCurveAfter,
    hintsOpened: hintsOfLog(run.stored.map((e) => e.event), submission.atMs).length,
  };
}

/** How many times a submission is graded again when batches keep arriving while it is graded. */
const SUBMIT_TRIES = 3;

/** Grades a job: the grading pool's, or (tests) one that does something meanwhile. */
export type Grader = (job: GradeJob, onWorkerMs?: OnWorkerMs) => Promise<AttemptResult>;

export interface SubmitOptions {
  grade?: Grader;
  timing?: ServerTiming;
}

export async function submitAttempt(db: Db, attemptId: number, input: SubmitInput, opts: SubmitOptions = {}): Promise<AttemptResult> {
  const grade = opts.grade ?? gradeSubmission;
  for (let tries = 1; ; tries++) {
    const stored = await tryStore(db, attemptId, input, grade, opts.timing);
    if (stored) {
      // A learning platform that launched this assignment gets the grade (server/lti/scores.ts); should this
      // fail, the score worker's sweep queues it later, so the submission's answer does not wait on it.
      await queueScoresForAttempt(db, attemptId).catch(() => 0);
      return stored;
    }
    if (tries >= SUBMIT_TRIES) throw conflict('Events are still arriving for this attempt; submit again once they are sent', 'events');
  }
}

/** Grades the attempt's log as it is now and stores the result; null when the log changed while grading. */
async function tryStore(db: Db, attemptId: number, input: SubmitInput, grade: Grader, timing: ServerTiming | undefined): Promise<AttemptResult | null> {
  // The attempt (with what its assignment shows) and its log at once; the definition is kept in memory.
  const readStarted = performance.now();
  const [{ attempt, show }, stored, injections] = await Promise.all([loadAttemptShowing(db, attemptId), loadStoredInputs(db, attemptId), loadInjectionRecords(db, attemptId)]);
  if (attempt.status === 'submitted') throw conflict('This attempt has already been submitted');
  // A running attempt has no diagnosis yet: that is what this stores.
  const run = attemptRunOf(attemptId, { ...attempt, diagnosis: null }, await loadDefinition(db, attempt.scenarioVersionId), stored, injections);
  timing?.add('read', performance.now() - readStarted);
  const seqs = run.stored.map((s) => s.seq);
  const missing = seqs.findIndex((seq, i) => seq !== i + 1);
  if (missing !== -1) {
    throw conflict(`Events ${missing + 1} to ${seqs[missing]! - 1} have not arrived yet; send them before submitting`, 'events');
  }
  const lastAtMs = run.stored.reduce((m, s) => Math.max(m, s.event.atMs), 0);
  if (input.atMs < lastAtMs) {
    throw badRequest(`atMs: the submission (${input.atMs} ms) is earlier than the last stored event (${lastAtMs} ms)`, { field: 'atMs' });
  }

  const job = gradeJobOf(attemptId, attempt, run, show, input);
  const gradeStarted = performance.now();
  const result = await grade(job, (ms) => timing?.add('worker', ms));
  timing?.add('grade', performance.now() - gradeStarted);

  const storeStarted = performance.now();
  try {
    const kept = await storeResult(db, attemptId, input, job.readings, seqs, result);
    return kept && studentResult(kept, resultShowing(attempt, show));
  } finally {
    timing?.add('store', performance.now() - storeStarted);
  }
}

/**
 * Stores a graded result in one call (loadline_store_submission, migration
 * 0005): it locks the attempt, and stores nothing when it was submitted
 * meanwhile (409) or its log is no longer `seqs` (null: grade again).
 */
async function storeResult(db: Db, attemptId: number, input: SubmitInput, readings: readonly RecordedReading[], seqs: number[], result: AttemptResult): Promise<AttemptResult | null> {
  const diagnosis = { atMs: input.atMs, ...input.diagnosis };
  const { rows } = await db.execute<{ outcome: string }>(sql`
    select loadline_store_submission(
      ${attemptId}::integer, ${seqs.length}::integer, ${seqs.at(-1) ?? 0}::integer, ${input.atMs}::integer,
      ${JSON.stringify(readings)}::jsonb, ${JSON.stringify(diagnosis)}::jsonb, ${JSON.stringify(result)}::jsonb,
      ${result.grade}::real, ${result.verified ?? false}::boolean, ${result.timeToDiagnosisMs}::integer
    ) as outcome`);
  const outcome = rows[0]?.outcome;
  if (outcome === 'stored') return result;
  if (outcome === 'changed') return null;
  if (outcome === 'submitted') throw conflict('This attempt has already been submitted');
  throw notFound('No such attempt');
}
