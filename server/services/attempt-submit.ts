/**
 * Submission: in one transaction with the attempt locked, re-run the model
 * over the stored log up to the submission's sim time, grade, and store the
 * readings, diagnosis and result. Time to diagnosis is the sim time of the
 * submission (what the student spent at the bench, pauses and reloads aside).
 * The right verdicts come from the reference procedures run on the scenario
 * version's car with the faults in place at the submission, cached per
 * definition and fault set.
 */
import { eq } from 'drizzle-orm';
import { outputCurve } from '../../sim/instruments.ts';
import type { AttemptResult, SubmitInput } from '../../shared/api/attempts.ts';
import type { Fault } from '../../sim/faults.ts';
import { referenceMeasurements } from '../../shared/reference-procedures.ts';
import type { ScenarioDefinition } from '../../shared/scenario.ts';
import { healthyVehicle } from '../../shared/sealed-faults.ts';
import type { Db } from '../db/client.ts';
import { attempts } from '../db/schema.ts';
import { badRequest, conflict } from '../http/errors.ts';
import { rerunAttempt } from './attempt-replay.ts';
import { loadAttempt, showAfter } from './attempt-store.ts';
import { correctVerdicts, gradeAttempt } from './grading.ts';
import { loadAttemptRun } from './live-attempt-run.ts';

const VERDICT_CACHE_SIZE = 64;
const verdictCache = new Map<string, ReturnType<typeof correctVerdicts>>();

/** The right verdicts for a scenario version's car with these faults (the reference procedures take a few hundred ms, so they are kept). */
export function verdictsFor(def: ScenarioDefinition, faults: readonly Fault[]): ReturnType<typeof correctVerdicts> {
  const inPlace = faults.map((f) => ({ id: f.id, kind: f.kind, severity01: f.severity01, onsetS: f.onsetS, intermittent: f.intermittent ?? null }));
  const key = JSON.stringify([def.vehicle.params, def.passRules, inPlace]);
  const hit = verdictCache.get(key);
  if (hit) return hit;
  const verdicts = correctVerdicts(referenceMeasurements({ vehicle: def.vehicle, passRules: def.passRules, faults: inPlace }));
  if (verdictCache.size >= VERDICT_CACHE_SIZE) {
    const oldest = verdictCache.keys().next();
    if (!oldest.done) verdictCache.delete(oldest.value);
  }
  verdictCache.set(key, verdicts);
  return verdicts;
}

export async function submitAttempt(db: Db, attemptId: number, input: SubmitInput): Promise<AttemptResult> {
  return db.transaction(async (tx) => {
    const attempt = await loadAttempt(tx, attemptId, { lock: true });
    if (attempt.status === 'submitted') throw conflict('This attempt has already been submitted');

    const run = await loadAttemptRun(tx, attemptId);
    const seqs = run.stored.map((s) => s.seq);
    const missing = seqs.findIndex((seq, i) => seq !== i + 1);
    if (missing !== -1) {
      throw conflict(`Events ${missing + 1} to ${seqs[missing]! - 1} have not arrived yet; send them before submitting`, 'events');
    }
    const lastAtMs = run.stored.reduce((m, s) => Math.max(m, s.event.atMs), 0);
    if (input.atMs < lastAtMs) {
      throw badRequest(`atMs: the submission (${input.atMs} ms) is earlier than the last stored event (${lastAtMs} ms)`, { field: 'atMs' });
    }

    const params = run.params;
    const rerun = rerunAttempt(params, run.seed, run.events, input.atMs);
    const faults = rerun.final.controls.faults;
    const show = await showAfter(tx, attempt.assignmentId);
    const curve = show.showCurveAfter
      ? {
          healthy: outputCurve(healthyVehicle(params, run.definition.vehicle.name).healthy, [], { hot: false }),
          fitted: outputCurve(params, faults, { hot: false }),
        }
      : null;
    const result = gradeAttempt({
      mode: attempt.mode,
      submission: input,
      testsExpected: run.definition.testsExpected,
      // The faults the car had by the submission (scenario and live), as the re-run saw them.
      correctVerdicts: verdictsFor(
        run.definition,
        faults.filter((f) => f.onsetS * 1000 <= input.atMs),
      ),
      faults,
      samples: rerun.samples,
      showFeedback: show.showFeedbackAfter,
      curve,
      pulleyRatio: params.belt.pulleyRatio,
    });

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
