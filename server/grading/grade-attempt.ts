/**
 * Grading a submitted attempt from the server's own re-run of the model.
 *
 * A recorded reading is evidence for its test when two things hold at the
 * display tick it shows: the value written down is what the bench showed
 * (shared/meter-display.ts, the same rounding as the bench's), and the test's
 * set-up held (shared/test-setups.ts). A reading outside its set-up is kept
 * and shown with the reason, and earns nothing.
 *
 * The grade of an assigned attempt (weights in GRADE_WEIGHTS, explained in
 * docs/grading.md), with E the share of the expected tests that have
 * evidence:
 * - evidence: 40 x E;
 * - verdicts: 20 x the share of expected tests with evidence and the right verdict;
 * - fault named: 20 x E when the fault named is the car's, else 0;
 * - process: 20 x E, less 10 for each kind of process mistake the re-run
 *   shows (a reversed clamp left uncorrected, a load held past the pile's or
 *   the fusible link's limits, a link blown, B+ removed with the engine
 *   running), at least 0.
 * Each of the scenario's hints the student opened costs the scenario's
 * points per hint (hintPoints, 0 by default), taken off the total.
 * So a right answer with no evidence earns nothing, and work done without
 * naming the fault earns at most 80.
 *
 * Pure: the re-run's samples come in, an AttemptResult goes out.
 */
import type { DiagnosticTest, FaultKind } from '../../sim/faults.ts';
import { FAULT_TEXT } from '../../shared/fault-catalogue-text.ts';
import type { OutputCurvePoint, Readings } from '../../sim/instruments.ts';
import {
  GRADE_WEIGHTS,
  PROCESS_DEDUCTION,
  type AttemptResult,
  type IntegrityFlag,
  type MistakeKind,
  type ReadingCheck,
  type RecordedReading,
  type SubmitInput,
} from '../../shared/api/attempts.ts';
import { DISPLAY_TICK_MS, meterShows, sameShown, shownWithUnit, type MeterQuantity } from '../../shared/meter-display.ts';
import type { DiagnosisChoice } from '../../shared/scenario.ts';
import type { ReferenceMeasurements } from './reference-procedures.ts';
import { DIAGNOSTIC_TEST_LABELS, DIAGNOSTIC_TESTS, diagnosisLabel, NO_FAULT_LABEL } from '../../shared/scenario.ts';
import { SetupTracker, TEST_SETUPS, type SetupCar, type SetupSample, type SetupStatus } from '../../shared/test-setups.ts';

export { GRADE_WEIGHTS, PROCESS_DEDUCTION };

/** The meters grading reads at a moment of the re-run. */
export type SampleReadings = Pick<
  Readings,
  'voltmeterV' | 'rippleVac' | 'clampA' | 'ammeterA' | 'pileA' | 'tachRpm' | 'batterySoc01' | 'engine' | 'pileOverheated'
>;

/** One display tick of the re-run: the meters, the set-up's inputs and what the process checks read. */
export interface RunSample {
  atMs: number;
  readings: SampleReadings;
  setup: SetupSample;
  /** The link burnt open by current in this run (not a fault that came with the car). */
  linkBurnt: boolean;
  /** Heat in the fusible link as a share of what melts it. */
  linkHeat01: number;
  bplusConnected: boolean;
}

const QUANTITY_WORDS: Readonly<Record<MeterQuantity, string>> = {
  voltage: 'DC volts',
  current: 'amps on the clamp',
  ripple: 'AC ripple',
  draw: 'the series ammeter’s draw',
  rpm: 'engine speed',
};

/**
 * Checks every reading against the re-run: the tracker is fed every sample
 * in order, and each reading is judged at its own tick.
 */
export function checkReadings(readings: readonly RecordedReading[], samples: readonly RunSample[], car: SetupCar, untilMs: number): ReadingCheck[] {
  const byTick = new Map<number, RecordedReading[]>();
  for (const r of readings) {
    const list = byTick.get(r.atMs);
    if (list) list.push(r);
    else byTick.set(r.atMs, [r]);
  }
  const checks = new Map<string, ReadingCheck>();
  const tracker = new SetupTracker(car);
  for (const s of samples) {
    tracker.feed(s.setup);
    const due = s.atMs % DISPLAY_TICK_MS === 0 ? byTick.get(s.atMs) : undefined;
    if (!due) continue;
    for (const r of due) if (r.atMs <= untilMs) checks.set(r.id, judge(r, s, tracker.status(r.test)));
  }
  return readings.map((r) => checks.get(r.id) ?? notATick(r));
}

function notATick(r: RecordedReading): ReadingCheck {
  return {
    ...base(r),
    shown: null,
    valueOk: false,
    inSetup: false,
    evidence: false,
    reason: 'The bench showed nothing at that moment: a reading is the value on the display at one of its ticks, before the submission.',
    unmet: [],
  };
}

const base = (r: RecordedReading) => ({ id: r.id, test: r.test, quantity: r.quantity, value: r.value, unit: r.unit, atMs: r.atMs });

/** One reading at its tick, with the test's set-up there. */
export function judge(r: RecordedReading, sample: RunSample, status: SetupStatus): ReadingCheck {
  const setup = TEST_SETUPS[r.test];
  const label = DIAGNOSTIC_TEST_LABELS[r.test];
  const rightQuantity = r.quantity === setup.quantity;
  const shownNow =
    rightQuantity && setup.reading === 'crank-minimum'
      ? status.crankMinV === null
        ? null
        : { value: status.crankMinV, unit: 'V' as const }
      : meterShows(r.quantity, sample.readings);
  const valueOk = shownNow !== null && sameShown(r, shownNow);
  const inSetup = rightQuantity && status.holds;
  const evidence = valueOk && inSetup;
  let reason: string;
  if (!rightQuantity) reason = `${label} is read as ${QUANTITY_WORDS[setup.quantity]} on ${setup.meter}, not as ${QUANTITY_WORDS[r.quantity]}: this reading is not evidence for it.`;
  else if (shownNow === null) reason = `No meter for ${QUANTITY_WORDS[r.quantity]} was connected at that moment.`;
  else if (!valueOk) reason = `The bench showed ${shownWithUnit(shownNow.value, shownNow.unit)} then, not ${shownWithUnit(r.value, r.unit)}.`;
  else if (!inSetup) reason = `Taken outside the test’s set-up: ${status.unmet[0] ?? 'the set-up did not hold'}.`;
  else reason = `Inside the set-up; the bench showed ${shownWithUnit(shownNow.value, shownNow.unit)}.`;
  return {
    ...base(r),
    shown: shownNow === null ? null : shownNow.unit === r.unit ? shownNow.value : null,
    valueOk,
    inSetup,
    evidence,
    reason,
    unmet: rightQuantity ? status.unmet : [],
  };
}

export type Mistake = AttemptResult['mistakes'][number];

/** Sustained-condition finder: the first time `cond` has held for `forMs`. */
function firstSustained(samples: readonly RunSample[], forMs: number, cond: (s: RunSample) => boolean): number | null {
  let since: number | null = null;
  for (const s of samples) {
    if (cond(s)) {
      since ??= s.atMs;
      if (s.atMs - since >= forMs) return since;
    } else since = null;
  }
  return null;
}

function firstTransition(samples: readonly RunSample[], flag: (s: RunSample) => boolean): number | null {
  let before = samples[0] ? flag(samples[0]) : false;
  for (const s of samples) {
    const now = flag(s);
    if (now && !before) return s.atMs;
    before = now;
  }
  return null;
}

/** Pile current above which a load is "on" for the long-load check. */
export const LOADED_PILE_A = 50;
/**
 * Load bursts should be kept to about 15 s (vehicle maker's output-test
 * procedure, Kia: "within 15 seconds to prevent damage to test equipment");
 * we allow 5 s more for the student to read and write the value down.
 */
export const LONG_LOAD_MS = 20_000;
/** A reversed clamp (negative charging current on the B+ cable) left this long is left uncorrected (common practice, no source). */
export const REVERSED_CLAMP_MS = 5_000;
/** Heat in the fusible link, as a share of what melts it, past which a load the student switched on was held beyond the link's limit (common practice, no source). */
export const LINK_OVERLOAD_HEAT = 0.8;
/** A drop of state of charge during the attempt counted as running the battery down. */
export const RUN_DOWN_SOC_DROP = 0.15;

const MISTAKE_TEXT: Readonly<Record<MistakeKind, string>> = {
  'reversed-clamp':
    'The clamp read negative on the B+ cable and was left so: its arrow pointed away from the battery. Charging current flows from the alternator to the battery; turn the clamp round.',
  'reversed-leads': 'The voltmeter read negative: the red lead was on the negative side. Red goes to the positive point.',
  'blown-fusible-link': 'The fusible link burnt open during the attempt: too much current for too long through the B+ circuit.',
  'link-overloaded': 'A load was held long enough to heat the fusible link close to melting: stop loading once the output reaches the rating.',
  'pile-overheated': 'The carbon pile overheated and cut out: keep load bursts short and let it cool between tests.',
  'long-loaded-test': 'A heavy load was held for more than 20 s: keep load bursts to about 15 s.',
  'bplus-removed-running': 'The B+ lead was taken off with the engine running: that can spike the voltage and damage the electronics. Remove it only with the engine stopped.',
  'battery-run-down': 'The battery was run down during the attempt (key on with the engine stopped, or long heavy loads).',
  'engine-stalled': 'The engine stalled.',
};

/** The mistakes that cost process points; the others are noted only. */
export const PROCESS_MISTAKES: ReadonlySet<MistakeKind> = new Set<MistakeKind>([
  'reversed-clamp',
  'blown-fusible-link',
  'link-overloaded',
  'pile-overheated',
  'long-loaded-test',
  'bplus-removed-running',
]);

/** Mistakes the re-run shows, each kind once at its first moment. */
export function findMistakes(samples: readonly RunSample[]): Mistake[] {
  const found = new Map<MistakeKind, number>();
  const note = (kind: MistakeKind, atMs: number | null) => {
    if (atMs === null) return;
    const prev = found.get(kind);
    if (prev === undefined || atMs < prev) found.set(kind, atMs);
  };
  note(
    'reversed-clamp',
    firstSustained(samples, REVERSED_CLAMP_MS, (s) => s.setup.clampOn === 'bplus-cable' && s.readings.engine === 'running' && (s.readings.clampA ?? 0) < -5),
  );
  note('reversed-leads', firstSustained(samples, 1000, (s) => (s.readings.voltmeterV ?? 0) < -1));
  note('blown-fusible-link', firstTransition(samples, (s) => s.linkBurnt));
  if (!found.has('blown-fusible-link')) note('link-overloaded', samples.find((s) => s.linkHeat01 >= LINK_OVERLOAD_HEAT && s.setup.switchedLoadA > 0)?.atMs ?? null);
  note('pile-overheated', firstTransition(samples, (s) => s.readings.pileOverheated));
  note('engine-stalled', firstTransition(samples, (s) => s.readings.engine === 'stalled'));
  note('long-loaded-test', firstSustained(samples, LONG_LOAD_MS, (s) => s.readings.pileA > LOADED_PILE_A));
  note('bplus-removed-running', samples.find((s) => !s.bplusConnected && s.readings.engine === 'running')?.atMs ?? null);
  const startSoc = samples[0]?.readings.batterySoc01;
  if (startSoc !== undefined) {
    note('battery-run-down', samples.find((s) => s.readings.batterySoc01 < startSoc - RUN_DOWN_SOC_DROP)?.atMs ?? null);
  }
  return [...found.entries()]
    .sort((a, b) => a[1] - b[1])
    .map(([kind, atMs]) => ({ kind, atMs: Math.round(atMs), message: MISTAKE_TEXT[kind], process: PROCESS_MISTAKES.has(kind) }));
}

/**
 * The right verdict of each test for a car: the pass or fail of the test's
 * reference procedure run on the model with the car's faults
 * (server/grading/reference-procedures.ts), so the key is what the car shows.
 */
export function correctVerdicts(measurements: ReferenceMeasurements): Record<DiagnosticTest, boolean> {
  const out = {} as Record<DiagnosticTest, boolean>;
  for (const test of DIAGNOSTIC_TESTS) out[test] = measurements[test].pass;
  return out;
}

export interface GradeInput {
  mode: 'assigned' | 'practice';
  submission: SubmitInput;
  /** The readings of the attempt's log (recorded and not struck out). */
  readings: readonly RecordedReading[];
  testsExpected: readonly DiagnosticTest[];
  /** The right verdict of each test (`correctVerdicts` of the reference measurements). */
  correctVerdicts: Readonly<Record<DiagnosticTest, boolean>>;
  /** The kinds of the faults the car had by the submission (scenario and live). */
  actualKinds: readonly FaultKind[];
  samples: readonly RunSample[];
  car: SetupCar;
  /** Injections the bench did not log as the server sent them. */
  flags: readonly IntegrityFlag[];
  showFeedback: boolean;
  /** Both curves, when the assignment shows the output curve. */
  curve: { healthy: OutputCurvePoint[]; fitted: OutputCurvePoint[] } | null;
  pulleyRatio: number;
  /** The scenario's hints the student opened before submitting, and the points each costs an assigned attempt. */
  hints?: { opened: number; pointsEach: number };
}

const round1 = (x: number) => Math.round(x * 10) / 10;

export function gradeAttempt(input: GradeInput): AttemptResult {
  const { submission, samples } = input;
  const atMs = submission.atMs;
  const hints = input.hints ?? { opened: 0, pointsEach: 0 };
  const checks = checkReadings(input.readings, samples, input.car, atMs);
  const evidencedTests = new Set(checks.filter((c) => c.evidence).map((c) => c.test));
  const expected = input.testsExpected;
  const n = Math.max(1, expected.length);
  const share = expected.filter((t) => evidencedTests.has(t)).length / n;

  const actualChoices: DiagnosisChoice[] = input.actualKinds.length ? [...input.actualKinds] : ['none'];
  const given = new Map(submission.diagnosis.verdicts.map((v) => [v.test, v.pass]));
  const verdicts = expected.map((test) => {
    const correct = input.correctVerdicts[test];
    const g = given.get(test);
    return { test, given: g ?? null, correct, ok: g === correct, evidenced: evidencedTests.has(test) };
  });
  const faultGiven = submission.diagnosis.faultKind;
  const faultOk = faultGiven === 'none' ? input.actualKinds.length === 0 : input.actualKinds.includes(faultGiven);
  const labels = input.actualKinds.length ? input.actualKinds.map((k) => FAULT_TEXT[k].label) : [NO_FAULT_LABEL];

  const mistakes = findMistakes(samples);
  const processMistakes = mistakes.filter((m) => m.process).length;
  const verified = share === 1 && checks.every((c) => c.valueOk) && input.flags.length === 0;

  let grade: number | null = null;
  let scoring: AttemptResult['scoring'] = null;
  if (input.mode === 'assigned') {
    const w = GRADE_WEIGHTS;
    const pts = {
      evidence: round1(w.evidence * share),
      verdicts: round1((w.verdicts * verdicts.filter((v) => v.ok && v.evidenced).length) / n),
      fault: round1(faultOk ? w.fault * share : 0),
      process: round1(Math.max(0, w.process * share - PROCESS_DEDUCTION * processMistakes)),
    };
    const hintDeduction = hints.opened * hints.pointsEach;
    grade = Math.round(Math.min(100, Math.max(0, pts.evidence + pts.verdicts + pts.fault + pts.process - hintDeduction)));
    scoring = { weights: { ...w }, points: pts, processDeduction: PROCESS_DEDUCTION, hintDeduction };
  }

  const feedback: string[] = [];
  if (input.showFeedback) {
    feedback.push(faultOk ? `Right diagnosis: ${labels.join(', ')}.` : `The car had: ${labels.join(', ')}. You named: ${diagnosisLabel(faultGiven)}.`);
    for (const v of verdicts) {
      const label = DIAGNOSTIC_TEST_LABELS[v.test];
      if (!v.evidenced) feedback.push(`${label}: no reading inside its set-up, so its verdict and the diagnosis it supports earn nothing.`);
      else if (v.given === null) feedback.push(`${label}: no verdict given (it ${v.correct ? 'passes' : 'fails'} on this car).`);
      else if (!v.ok) feedback.push(`${label}: you marked it ${v.given ? 'pass' : 'fail'}, but it ${v.correct ? 'passes' : 'fails'} on this car.`);
    }
    for (const c of checks) if (!c.evidence) feedback.push(`Reading of ${shownWithUnit(c.value, c.unit)} (${DIAGNOSTIC_TEST_LABELS[c.test]}): ${c.reason}`);
    for (const m of mistakes) feedback.push(m.message);
    for (const f of input.flags) feedback.push(f.message);
    if (hints.opened > 0) {
      const cost = input.mode === 'assigned' && hints.pointsEach > 0 ? `: ${hints.opened * hints.pointsEach} points off the grade` : '';
      feedback.push(`You opened ${hints.opened} of the scenario’s hints${cost}.`);
    }
  }

  const result: AttemptResult = {
    grade,
    verified,
    scoring,
    hidden: null,
    readings: checks,
    verdicts,
    fault: { given: faultGiven, actual: actualChoices, ok: faultOk, labels },
    timeToDiagnosisMs: Math.round(atMs),
    mistakes,
    flags: [...input.flags],
    feedback,
    hints: { opened: hints.opened, pointsEach: hints.pointsEach },
  };
  if (input.curve) {
    result.outputCurve = input.curve;
    const byTick = new Map(samples.map((s) => [s.atMs, s] as const));
    result.measuredPoints = checks.flatMap((c) => {
      if (!c.evidence || c.test !== 'output') return [];
      const s = byTick.get(c.atMs);
      return s ? [{ altRpm: Math.round(s.readings.tachRpm * input.pulleyRatio), currentA: c.value }] : [];
    });
  }
  return result;
}
