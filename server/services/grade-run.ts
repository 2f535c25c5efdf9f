/**
 * The CPU part of a submission, pure and on plain data so that it can run in
 * a grading worker as well as in the request's own thread: re-run the model
 * over the log up to the submission's sim time, find the right verdicts for
 * the faults in place by then (reference procedures, cached per car and fault
 * set), draw the output curves when the assignment shows them, and grade.
 * Everything the submission then stores comes from the input and the result.
 */
import type { AttemptResult, SubmitInput } from '../../shared/api/attempts.ts';
import { referenceMeasurements } from '../../shared/reference-procedures.ts';
import { blankScenario, type ScenarioDefinition } from '../../shared/scenario.ts';
import { healthyVehicle } from '../../shared/sealed-faults.ts';
import type { Fault } from '../../sim/faults.ts';
import type { InputEvent } from '../../sim/inputs.ts';
import { outputCurve } from '../../sim/instruments.ts';
import { finishRerun, rerunAttempt, type RerunCursor } from './attempt-replay.ts';
import { correctVerdicts, gradeAttempt } from './grading.ts';
import { Lru } from '../db/scoped-cache.ts';

/** One submission to grade: structured-clonable, so it can be posted to a worker. */
export interface GradeJob {
  /** The attempt, so that a re-run carried ahead for it (run-ahead.ts) can be checked against this job and used. */
  attemptId?: number;
  definition: ScenarioDefinition;
  seed: number;
  /** The scenario's faults at 0 ms, then the stored log in seq order. */
  events: InputEvent[];
  submission: SubmitInput;
  mode: 'assigned' | 'practice';
  showFeedback: boolean;
  showCurve: boolean;
}

const verdictCache = new Lru<string, ReturnType<typeof correctVerdicts>>(64);

/** The right verdicts for a scenario version's car with these faults (the reference procedures take a few hundred ms, so they are kept). */
export function verdictsFor(def: ScenarioDefinition, faults: readonly Fault[]): ReturnType<typeof correctVerdicts> {
  const inPlace = faults.map((f) => ({ id: f.id, kind: f.kind, severity01: f.severity01, onsetS: f.onsetS, intermittent: f.intermittent ?? null }));
  const key = JSON.stringify([def.vehicle.params, def.passRules, inPlace]);
  const hit = verdictCache.get(key);
  if (hit) return hit;
  const verdicts = correctVerdicts(referenceMeasurements({ vehicle: def.vehicle, passRules: def.passRules, faults: inPlace }));
  verdictCache.set(key, verdicts);
  return verdicts;
}

/**
 * Grades a job. `ahead`, when given, is the attempt's re-run carried ahead
 * and checked against this job (RunAhead.take): it is carried on to the
 * submission instead of re-running from the start.
 */
export function gradeRun(job: GradeJob, ahead: RerunCursor | null = null): AttemptResult {
  const { definition, submission } = job;
  const params = definition.vehicle.params;
  const rerun = ahead ? finishRerun(ahead, submission.atMs) : rerunAttempt(params, job.seed, job.events, submission.atMs);
  const faults = [...definition.faults, ...injectedFaults(job.events)];
  const curve = job.showCurve
    ? {
        healthy: outputCurve(healthyVehicle(params, definition.vehicle.name).healthy, [], { hot: false }),
        fitted: outputCurve(params, rerun.final.controls.changes, { hot: false }),
      }
    : null;
  return gradeAttempt({
    mode: job.mode,
    submission,
    testsExpected: definition.testsExpected,
    // The faults the car had by the submission (scenario and live), as the re-run saw them.
    correctVerdicts: verdictsFor(
      definition,
      faults.filter((f) => f.onsetS * 1000 <= submission.atMs),
    ),
    faults,
    samples: rerun.samples,
    showFeedback: job.showFeedback,
    curve,
    pulleyRatio: params.belt.pulleyRatio,
  });
}

/** The faults injected by events of the log (and not cleared since). */
function injectedFaults(events: readonly InputEvent[]): Fault[] {
  const live = new Map<string, Fault>();
  for (const e of events) {
    if (e.kind === 'fault-inject') live.set(e.fault.id, e.fault);
    else if (e.kind === 'fault-clear') live.delete(e.faultId);
  }
  return [...live.values()];
}

/**
 * A made-up attempt for warming a grader up: a car with an open diode, the
 * engine started and held at 2,000 rpm with the pile stepped up and down,
 * submitted after `simS` seconds with one reading.
 */
export function warmUpJob(simS = 60): GradeJob {
  const definition = blankScenario();
  definition.faults = [{ id: 'warm-up', kind: 'diode-open', severity01: 1, onsetS: 0, intermittent: null }];
  const atMs = simS * 1000;
  const events: InputEvent[] = [
    ...definition.faults.map((fault) => ({ kind: 'fault-inject' as const, atMs: 0, fault })),
    { kind: 'lead', atMs: 0, which: 'red', point: 'battery-pos' },
    { kind: 'lead', atMs: 0, which: 'black', point: 'battery-neg' },
    { kind: 'key', atMs: 1000, position: 'start' },
    { kind: 'key', atMs: 3000, position: 'on' },
    { kind: 'rpm', atMs: 4000, rpm: 2000 },
  ];
  for (let t = 6000; t < atMs; t += 2000) events.push({ kind: 'pile', atMs: t, dial01: ((t / 2000) % 5) / 5 });
  return {
    definition,
    seed: 7,
    events,
    submission: {
      atMs,
      readings: [{ id: 'warm-up', test: 'regulated-voltage', quantity: 'voltage', value: 14, unit: 'V', atMs: atMs - 500, where: 'battery posts' }],
      diagnosis: { faultKind: 'diode-open', verdicts: [{ test: 'regulated-voltage', pass: false }], notes: '' },
    },
    mode: 'assigned',
    showFeedback: true,
    showCurve: true,
  };
}
