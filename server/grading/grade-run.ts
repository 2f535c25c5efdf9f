/**
 * The CPU part of a submission, pure and on plain data so that it can run in
 * a grading worker as well as in the request's own thread: re-run the
 * attempt's compiled car over the model's events of its log (with the
 * instructor's injections where the server says they were delivered) up to
 * the submission's sim time, find the right verdicts for the faults in place
 * by then (reference procedures, cached per car and fault set), draw the
 * output curves when the assignment shows them, and grade the readings of
 * the log. Everything the submission then stores comes from the input and
 * the result.
 */
import type { AttemptResult, IntegrityFlag, RecordedReading, SubmitInput } from '../../shared/api/attempts.ts';
import { referenceMeasurements } from './reference-procedures.ts';
import { blankScenario, type ScenarioDefinition } from '../../shared/scenario.ts';
import { setupCarOf } from '../../shared/test-setups.ts';
import { compileCar, type CompiledCar } from '../../sim/compiled-car.ts';
import type { Fault } from '../../sim/faults.ts';
import type { InputEvent } from '../../sim/inputs.ts';
import { outputCurve } from '../../sim/instruments.ts';
import type { VehicleParams } from '../../sim/params.ts';
import { finishRerun, rerunAttempt, type SampledRerun } from './rerun.ts';
import { correctVerdicts, gradeAttempt } from './grade-attempt.ts';
import { Lru } from '../db/scoped-cache.ts';

/** One submission to grade: structured-clonable, so it can be posted to a worker. */
export interface GradeJob {
  /** The attempt, so that a re-run carried ahead for it (run-ahead.ts) can be checked against this job and used. */
  attemptId?: number;
  definition: ScenarioDefinition;
  /** The car the bench ran (compiled from the definition's vehicle and faults). */
  car: CompiledCar;
  seed: number;
  /** The model's events: the stored log's, with the injections at the server's times, in log order. */
  events: InputEvent[];
  /** The readings of the log. */
  readings: RecordedReading[];
  submission: SubmitInput;
  /** The faults in place by the submission (the scenario's whose onset has come, and the injections in force). */
  faults: Fault[];
  flags: IntegrityFlag[];
  mode: 'assigned' | 'practice';
  showFeedback: boolean;
  showCurve: boolean;
  /** How many of the scenario's hints the log shows opened before the submission. */
  hintsOpened?: number;
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

/** A healthy unit of the car's spec: the fields a fault works through at their healthy values (for the curve of the rating). */
export function healthyParams(params: VehicleParams): VehicleParams {
  return {
    ...params,
    alternator: { ...params.alternator, openDiodes: [], shortedDiodes: [], openPhases: [], keyOffLeakageA: 0 },
    regulator: { ...params.regulator, dutyFloor01: 0 },
    wiring: { ...params.wiring, fusibleLinkOpen: false, bplusExtraOhm: 0, groundExtraOhm: 0 },
    loads: { ...params.loads, stuckDrawA: 0 },
  };
}

/**
 * Grades a job. `ahead`, when given, is the attempt's re-run carried ahead
 * and checked against this job (RunAhead.take): it is carried on to the
 * submission instead of re-running from the start.
 */
export function gradeRun(job: GradeJob, ahead: SampledRerun | null = null): AttemptResult {
  const { definition, submission, car } = job;
  const rerun = ahead ? finishRerun(ahead, submission.atMs) : rerunAttempt(car.params, job.seed, job.events, submission.atMs, car.changes);
  const curve = job.showCurve
    ? {
        healthy: outputCurve(healthyParams(definition.vehicle.params), [], { hot: false }),
        fitted: outputCurve(car.params, rerun.final.controls.changes, { hot: false }),
      }
    : null;
  return gradeAttempt({
    mode: job.mode,
    submission,
    readings: job.readings,
    testsExpected: definition.testsExpected,
    correctVerdicts: verdictsFor(definition, job.faults),
    actualKinds: [...new Set(job.faults.map((f) => f.kind))],
    samples: rerun.samples,
    car: setupCarOf(car.params),
    flags: job.flags,
    showFeedback: job.showFeedback,
    curve,
    pulleyRatio: car.params.belt.pulleyRatio,
    hints: { opened: job.hintsOpened ?? 0, pointsEach: definition.hintPoints ?? 0 },
  });
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
    { kind: 'lead', atMs: 0, which: 'red', point: 'battery-pos' },
    { kind: 'lead', atMs: 0, which: 'black', point: 'battery-neg' },
    { kind: 'key', atMs: 1000, position: 'start' },
    { kind: 'key', atMs: 3000, position: 'on' },
    { kind: 'rpm', atMs: 4000, rpm: 2000 },
  ];
  for (let t = 6000; t < atMs; t += 2000) events.push({ kind: 'pile', atMs: t, dial01: ((t / 2000) % 5) / 5 });
  return {
    definition,
    car: compileCar(definition.vehicle.params, definition.faults, definition.vehicle.name),
    seed: 7,
    events,
    readings: [{ id: 'warm-up', test: 'regulated-voltage', quantity: 'voltage', value: 14, unit: 'V', atMs: atMs - 500, where: 'battery posts' }],
    submission: { atMs, diagnosis: { faultKind: 'diode-open', verdicts: [{ test: 'regulated-voltage', pass: false }], notes: '' } },
    faults: definition.faults,
    flags: [],
    mode: 'assigned',
    showFeedback: true,
    showCurve: true,
  };
}
