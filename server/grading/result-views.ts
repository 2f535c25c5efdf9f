/**
 * What a student may see of a graded result. The stored result is whole; a
 * student reads it through here.
 *
 * - A practice result reveals nothing a live car would not: the student's own
 *   readings with what the bench showed and whether each was inside its
 *   test's set-up, and what the re-run shows of how the work was done (a
 *   blown link, a pile that cut out); not the fault, not which tests were
 *   expected, not the right verdicts, not the curve of the fitted unit.
 * - An assignment that hides feedback hides, until it closes (its due date),
 *   the grade, the fault, the expected verdicts and the values the bench
 *   showed, everywhere a student can look; the page says when they show.
 *
 * Instructors always read the whole result.
 */
import type { AttemptResult } from '../../shared/api/attempts.ts';
import { shownWithUnit } from '../../shared/meter-display.ts';
import { DIAGNOSTIC_TEST_LABELS } from '../../shared/scenario.ts';

/** What decides whether a result is hidden from its student. */
export interface ResultShowing {
  mode: 'assigned' | 'practice';
  showFeedbackAfter: boolean;
  /** The assignment's due date (null for practice). */
  dueAt: Date | null;
}

export type Hidden = NonNullable<AttemptResult['hidden']>;

/** Whether (and until when) a student's result is hidden from them now. */
export function hiddenFor(showing: ResultShowing, now = new Date()): Hidden | null {
  if (showing.mode === 'practice') return { reason: 'practice', until: null };
  if (!showing.showFeedbackAfter && showing.dueAt !== null && showing.dueAt > now) return { reason: 'until-close', until: showing.dueAt.toISOString() };
  return null;
}

/** The result as its student may see it now. */
export function studentResult(result: AttemptResult, showing: ResultShowing, now = new Date()): AttemptResult {
  const hidden = hiddenFor(showing, now);
  if (!hidden) return result;
  const untilClose = hidden.reason === 'until-close';
  const readings = result.readings.map((r) => {
    if (!untilClose) return r;
    return {
      ...r,
      shown: null,
      valueOk: null,
      evidence: null,
      reason: r.inSetup ? 'Taken inside the test’s set-up; its value is checked when results show.' : `Taken outside the test’s set-up: ${r.unmet[0] ?? 'the set-up did not hold'}.`,
    };
  });
  const feedback = [
    ...readings.filter((r) => r.evidence === false || (r.evidence === null && !r.inSetup)).map((r) => `Reading of ${shownWithUnit(r.value, r.unit)} (${DIAGNOSTIC_TEST_LABELS[r.test]}): ${r.reason}`),
    ...result.mistakes.map((m) => m.message),
    ...result.flags.map((f) => f.message),
  ];
  return {
    grade: null,
    verified: null,
    scoring: null,
    hidden,
    readings,
    verdicts: [],
    fault: { given: result.fault.given, actual: null, ok: null, labels: [] },
    timeToDiagnosisMs: result.timeToDiagnosisMs,
    mistakes: result.mistakes,
    flags: result.flags,
    feedback,
  };
}

/** A grade as its student may see it now (null while hidden). */
export function studentGrade(grade: number | null, showing: ResultShowing, now = new Date()): number | null {
  return hiddenFor(showing, now) ? null : grade;
}
