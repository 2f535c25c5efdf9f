/**
 * Grading a submitted attempt from the server's own re-run of the model:
 * each recorded reading against what the meters showed then, the verdicts
 * against what the reference procedures show on the car with its faults, the fault named, and the mistakes
 * the re-run shows (a reversed clamp, a blown link, an overheated pile ...).
 * Pure: the re-run's samples come in, an AttemptResult goes out.
 */
import type { DiagnosticTest, Fault, FaultKind } from '../../sim/faults.ts';
import { FAULT_CATALOG } from '../../sim/faults.ts';
import type { Controls } from '../../sim/inputs.ts';
import type { OutputCurvePoint, Readings } from '../../sim/instruments.ts';
import type { AttemptResult, MistakeKind, RecordedReading, SubmitInput } from '../../shared/api/attempts.ts';
import type { DiagnosisChoice } from '../../shared/scenario.ts';
import type { ReferenceMeasurements } from '../../shared/reference-procedures.ts';
import { DIAGNOSTIC_TEST_LABELS, DIAGNOSTIC_TESTS, diagnosisLabel, NO_FAULT_LABEL } from '../../shared/scenario.ts';

/** The meters grading reads at a moment of the re-run. */
export type SampleReadings = Pick<
  Readings,
  'voltmeterV' | 'rippleVac' | 'clampA' | 'ammeterA' | 'pileA' | 'tachRpm' | 'batterySoc01' | 'engine' | 'pileOverheated'
>;

/** One moment of the re-run: what the reading and mistake checks read of it. */
export interface RunSample {
  atMs: number;
  readings: SampleReadings;
  controls: { clamp: Pick<Controls['clamp'], 'conductor'> };
  /** The link burnt open by current in this run (not a fault that came with the car). */
  linkBurnt: boolean;
}

/** How far around a reading's moment a matching meter value is accepted (meters move). */
export const READING_WINDOW_MS = 1500;

/** Points of the grade of an assigned attempt. */
export const GRADE_WEIGHTS = { verdicts: 40, fault: 30, evidence: 30 } as const;
export const MISTAKE_PENALTY = 5;
export const MAX_MISTAKE_PENALTY = 20;
export const UNVERIFIED_PENALTY = 5;
export const MAX_UNVERIFIED_PENALTY = 20;

type MeterName = 'voltmeter' | 'ripple' | 'clamp' | 'pile ammeter' | 'series ammeter' | 'tachometer';

interface Meter {
  name: MeterName;
  /** In the base unit of the quantity: V, V AC, A or rpm. */
  read: (r: SampleReadings) => number | null;
}

const METERS: Readonly<Record<RecordedReading['quantity'], readonly Meter[]>> = {
  voltage: [{ name: 'voltmeter', read: (r) => r.voltmeterV }],
  ripple: [{ name: 'ripple', read: (r) => r.rippleVac }],
  current: [
    { name: 'clamp', read: (r) => r.clampA },
    { name: 'pile ammeter', read: (r) => r.pileA },
    { name: 'series ammeter', read: (r) => r.ammeterA },
  ],
  draw: [
    { name: 'series ammeter', read: (r) => r.ammeterA },
    { name: 'clamp', read: (r) => r.clampA },
  ],
  rpm: [{ name: 'tachometer', read: (r) => r.tachRpm }],
};

/**
 * Tolerance of a written-down reading: the larger of a share of the meter's
 * value and an absolute floor, in the base unit. Voltage takes 1 %, not 2 %:
 * a tenth of a volt at the battery is a quarter of its state of charge.
 */
const RELATIVE_TOLERANCE: Readonly<Record<RecordedReading['quantity'], number>> = {
  voltage: 0.01,
  current: 0.02,
  ripple: 0.02,
  draw: 0.02,
  rpm: 0.02,
};

const ABSOLUTE_TOLERANCE: Readonly<Record<RecordedReading['quantity'], number>> = {
  voltage: 0.05,
  current: 1,
  ripple: 0.01,
  draw: 0.01,
  rpm: 50,
};

const UNIT_SCALE: Readonly<Record<RecordedReading['unit'], number>> = { V: 1, A: 1, mV: 0.001, mA: 0.001, rpm: 1 };

export function toleranceFor(quantity: RecordedReading['quantity'], meterValue: number): number {
  return Math.max(RELATIVE_TOLERANCE[quantity] * Math.abs(meterValue), ABSOLUTE_TOLERANCE[quantity]);
}

/** The sample at or just before `atMs` (samples are in time order). */
export function sampleAt(samples: readonly RunSample[], atMs: number): RunSample | null {
  let lo = 0;
  let hi = samples.length - 1;
  let found: RunSample | null = null;
  while (lo <= hi) {
    const mid = (lo + hi) >> 1;
    const s = samples[mid]!;
    if (s.atMs <= atMs) {
      found = s;
      lo = mid + 1;
    } else hi = mid - 1;
  }
  return found ?? samples[0] ?? null;
}

function samplesAround(samples: readonly RunSample[], atMs: number): RunSample[] {
  return samples.filter((s) => s.atMs >= atMs - READING_WINDOW_MS && s.atMs <= atMs + READING_WINDOW_MS);
}

const fmt = (x: number, unit: string) => {
  const digits = unit === 'rpm' || unit === 'mA' || unit === 'mV' ? 0 : unit === 'A' ? 1 : 2;
  return `${x.toFixed(digits)} ${unit}`;
};

export type ReadingCheck = AttemptResult['readings'][number];

/** Whether a recorded reading is what one of the meters for its quantity showed within the window around its moment. */
export function checkReading(reading: RecordedReading, samples: readonly RunSample[]): ReadingCheck {
  const scale = UNIT_SCALE[reading.unit];
  const given = reading.value * scale;
  const meters = METERS[reading.quantity];
  const base = { id: reading.id, test: reading.test, value: reading.value, unit: reading.unit };
  const window = samplesAround(samples, reading.atMs);
  for (const meter of meters) {
    for (const s of window) {
      const m = meter.read(s.readings);
      if (m !== null && Math.abs(given - m) <= toleranceFor(reading.quantity, m)) {
        return { ...base, expectedValue: round(m / scale), ok: true, message: `Matches the ${meter.name} (${fmt(m / scale, reading.unit)}).` };
      }
    }
  }
  // Not matched: report the meter, at the reading's own moment, closest to what was written down.
  const at = sampleAt(samples, reading.atMs);
  let best: { name: MeterName; value: number } | null = null;
  if (at) {
    for (const meter of meters) {
      const m = meter.read(at.readings);
      if (m !== null && (best === null || Math.abs(m - given) < Math.abs(best.value - given))) best = { name: meter.name, value: m };
    }
  }
  if (!best) {
    return { ...base, expectedValue: null, ok: false, message: `No meter for ${reading.quantity} was connected at that moment.` };
  }
  return {
    ...base,
    expectedValue: round(best.value / scale),
    ok: false,
    message: `The ${best.name} showed ${fmt(best.value / scale, reading.unit)} then, not ${fmt(reading.value, reading.unit)}.`,
  };
}

function round(x: number): number {
  return Math.round(x * 1000) / 1000;
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
/** A drop of state of charge during the attempt counted as running the battery down. */
export const RUN_DOWN_SOC_DROP = 0.15;

const MISTAKE_TEXT: Readonly<Record<MistakeKind, string>> = {
  'reversed-clamp':
    'The clamp read negative on the B+ cable: its arrow pointed away from the battery. Charging current flows from the alternator to the battery; turn the clamp round.',
  'reversed-leads': 'The voltmeter read negative: the red lead was on the negative side. Red goes to the positive point.',
  'blown-fusible-link': 'The fusible link burnt open during the attempt: too much current for too long through the B+ circuit.',
  'pile-overheated': 'The carbon pile overheated and cut out: keep load bursts short and let it cool between tests.',
  'battery-run-down': 'The battery was run down during the attempt (key on with the engine stopped, or long heavy loads).',
  'long-loaded-test': 'A heavy load was held for more than 20 s: keep load bursts to about 15 s.',
  'engine-stalled': 'The engine stalled.',
};

/** Mistakes the re-run shows, each kind once at its first moment. */
export function findMistakes(samples: readonly RunSample[], readings: readonly RecordedReading[]): Mistake[] {
  const found = new Map<MistakeKind, number>();
  const note = (kind: MistakeKind, atMs: number | null) => {
    if (atMs === null) return;
    const prev = found.get(kind);
    if (prev === undefined || atMs < prev) found.set(kind, atMs);
  };
  note(
    'reversed-clamp',
    firstSustained(samples, 1000, (s) => s.controls.clamp.conductor === 'bplus-cable' && s.readings.engine === 'running' && (s.readings.clampA ?? 0) < -5),
  );
  note('reversed-leads', firstSustained(samples, 1000, (s) => (s.readings.voltmeterV ?? 0) < -1));
  for (const r of readings) {
    if (r.quantity === 'current' && r.test === 'output' && r.value < -1) note('reversed-clamp', r.atMs);
    if (r.quantity === 'voltage' && r.value * UNIT_SCALE[r.unit] < -1) note('reversed-leads', r.atMs);
  }
  note('blown-fusible-link', firstTransition(samples, (s) => s.linkBurnt));
  note('pile-overheated', firstTransition(samples, (s) => s.readings.pileOverheated));
  note('engine-stalled', firstTransition(samples, (s) => s.readings.engine === 'stalled'));
  note('long-loaded-test', firstSustained(samples, LONG_LOAD_MS, (s) => s.readings.pileA > LOADED_PILE_A));
  const startSoc = samples[0]?.readings.batterySoc01;
  if (startSoc !== undefined) {
    note('battery-run-down', samples.find((s) => s.readings.batterySoc01 < startSoc - RUN_DOWN_SOC_DROP)?.atMs ?? null);
  }
  return [...found.entries()].sort((a, b) => a[1] - b[1]).map(([kind, atMs]) => ({ kind, atMs, message: MISTAKE_TEXT[kind] }));
}

/**
 * The right verdict of each test for a car: the pass or fail of the test's
 * reference procedure run on the model with the car's faults
 * (shared/reference-procedures.ts), so the key is what the car shows.
 */
export function correctVerdicts(measurements: ReferenceMeasurements): Record<DiagnosticTest, boolean> {
  const out = {} as Record<DiagnosticTest, boolean>;
  for (const test of DIAGNOSTIC_TESTS) out[test] = measurements[test].pass;
  return out;
}

/** The fault kinds the car had by the submission: scenario and injected faults still in place whose onset has passed. */
export function actualFaultKinds(faults: readonly Fault[], atMs: number): FaultKind[] {
  return [...new Set(faults.filter((f) => f.onsetS * 1000 <= atMs).map((f) => f.kind))];
}

export interface GradeInput {
  mode: 'assigned' | 'practice';
  submission: SubmitInput;
  testsExpected: readonly DiagnosticTest[];
  /** The right verdict of each test (`correctVerdicts` of the reference measurements). */
  correctVerdicts: Readonly<Record<DiagnosticTest, boolean>>;
  /** The faults in place at the submission (scenario and live), as the re-run saw them. */
  faults: readonly Fault[];
  samples: readonly RunSample[];
  showFeedback: boolean;
  /** Both curves, when the assignment shows the output curve. */
  curve: { healthy: OutputCurvePoint[]; fitted: OutputCurvePoint[] } | null;
  pulleyRatio: number;
}

export function gradeAttempt(input: GradeInput): AttemptResult {
  const { submission, samples } = input;
  const atMs = submission.atMs;
  const readingChecks = submission.readings.map((r) => checkReading(r, samples));
  const verified = readingChecks.every((c) => c.ok);
  const actual = actualFaultKinds(input.faults, atMs);
  const actualChoices: DiagnosisChoice[] = actual.length ? actual : ['none'];

  const given = new Map(submission.diagnosis.verdicts.map((v) => [v.test, v.pass]));
  const verdicts = input.testsExpected.map((test) => {
    const correct = input.correctVerdicts[test];
    const g = given.get(test);
    return { test, given: g ?? null, correct, ok: g === correct };
  });

  const faultGiven = submission.diagnosis.faultKind;
  const faultOk = faultGiven === 'none' ? actual.length === 0 : actual.includes(faultGiven);
  const labels = actual.length ? actual.map((k) => FAULT_CATALOG[k].label) : [NO_FAULT_LABEL];

  const mistakes = findMistakes(samples, submission.readings);
  const verifiedTests = new Set(readingChecks.filter((c) => c.ok).map((c) => c.test));
  const evidenced = input.testsExpected.filter((t) => verifiedTests.has(t));

  let grade: number | null = null;
  if (input.mode === 'assigned') {
    const n = Math.max(1, input.testsExpected.length);
    const points =
      (GRADE_WEIGHTS.verdicts * verdicts.filter((v) => v.ok).length) / n +
      (faultOk ? GRADE_WEIGHTS.fault : 0) +
      (GRADE_WEIGHTS.evidence * evidenced.length) / n -
      Math.min(MAX_MISTAKE_PENALTY, MISTAKE_PENALTY * mistakes.length) -
      Math.min(MAX_UNVERIFIED_PENALTY, UNVERIFIED_PENALTY * readingChecks.filter((c) => !c.ok).length);
    grade = Math.round(Math.min(100, Math.max(0, points)));
  }

  const feedback: string[] = [];
  if (input.showFeedback) {
    feedback.push(
      faultOk ? `Right diagnosis: ${labels.join(', ')}.` : `The car had: ${labels.join(', ')}. You named: ${diagnosisLabel(faultGiven)}.`,
    );
    for (const v of verdicts) {
      const label = DIAGNOSTIC_TEST_LABELS[v.test];
      if (v.given === null) feedback.push(`${label}: no verdict given (it ${v.correct ? 'passes' : 'fails'} on this car).`);
      else if (!v.ok) feedback.push(`${label}: you marked it ${v.given ? 'pass' : 'fail'}, but it ${v.correct ? 'passes' : 'fails'} on this car.`);
    }
    for (const t of input.testsExpected) {
      if (!verifiedTests.has(t)) feedback.push(`${DIAGNOSTIC_TEST_LABELS[t]}: no verified reading was recorded.`);
    }
    for (const c of readingChecks) if (!c.ok) feedback.push(`Reading of ${fmt(c.value, c.unit)} (${DIAGNOSTIC_TEST_LABELS[c.test]}): ${c.message}`);
    for (const m of mistakes) feedback.push(m.message);
  }

  const result: AttemptResult = {
    grade,
    verified,
    readings: readingChecks,
    verdicts,
    fault: { given: faultGiven, actual: actualChoices, ok: faultOk, labels },
    timeToDiagnosisMs: atMs,
    mistakes,
    feedback,
  };
  if (input.curve) {
    result.outputCurve = input.curve;
    result.measuredPoints = readingChecks.flatMap((c, i) => {
      const r = submission.readings[i]!;
      if (!c.ok || r.test !== 'output' || r.quantity !== 'current') return [];
      const s = sampleAt(samples, r.atMs);
      return s ? [{ altRpm: Math.round(s.readings.tachRpm * input.pulleyRatio), currentA: r.value }] : [];
    });
  }
  return result;
}
