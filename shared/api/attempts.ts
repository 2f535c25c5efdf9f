/**
 * The bench's contract with the server: starting an attempt, the event log
 * (the model's inputs and the readings the student records, each stored as
 * it is taken), submission and the graded result. The bootstrap carries the
 * car to simulate, never the fault list (docs/decisions/001-sealed-faults.md).
 */
import { z } from 'zod';
import type { DiagnosticTest } from '../../sim/faults.ts';
import type { ClampArrow, Conductor, ConnectionPoint, InputEvent, KeyPosition, LeadColour } from '../../sim/inputs.ts';
import { CONDUCTORS, CONNECTION_POINTS } from '../../sim/inputs.ts';
import type { OutputCurvePoint } from '../../sim/instruments.ts';
import type { CompiledCar } from '../../sim/compiled-car.ts';
import { carChangeSchema } from '../car.ts';
import type { DiagnosisChoice, ScenarioDefinition, StudentScenarioView } from '../scenario.ts';
import { DIAGNOSTIC_TEST_LABELS, DIAGNOSTIC_TESTS, diagnosisChoiceSchema, diagnosisLabel, diagnosticTestSchema, faultSchema, studentScenarioView } from '../scenario.ts';
import { idField, idParam } from './ids.ts';

// Imported from here by the live-session contract; the list itself lives with the scenario document.
export { DIAGNOSTIC_TESTS };

/**
 * The longest an attempt may run, in sim time: two hours. A whole charging
 * system diagnosis (battery, regulated voltage, output, drops, ripple,
 * cranking) takes well under an hour on the bench, and the key-off draw test
 * waits at most 75 minutes for the modules to sleep (the longest sleep delay
 * a scenario may set); two hours covers a lab period with both. Grading
 * re-runs the model over the whole of it, so this also bounds what one
 * attempt costs the server. The bench stops its clock here.
 */
export const MAX_ATTEMPT_MS = 2 * 60 * 60 * 1000;
/** Highest engine speed a bench event may ask for. */
export const MAX_EVENT_RPM = 8000;
export const MAX_EVENTS_PER_BATCH = 500;
export const MAX_READINGS = 100;

const simTimeMsSchema = z
  .number()
  .int('atMs must be a whole number of milliseconds')
  .min(0, 'atMs must not be negative')
  .max(MAX_ATTEMPT_MS, `atMs must be at most ${MAX_ATTEMPT_MS} (two hours, the longest an attempt runs)`);

const idSchema = z
  .string()
  .min(1, 'must not be empty')
  .max(64, 'must be at most 64 characters')
  .regex(/^[A-Za-z0-9_.:-]+$/, 'may contain letters, digits and _ . : - only');

const keyPositionSchema = z.enum(['off', 'on', 'start'] as const satisfies readonly KeyPosition[]);
const leadColourSchema = z.enum(['red', 'black'] as const satisfies readonly LeadColour[]);
const clampArrowSchema = z.enum(['toward-battery', 'toward-alternator'] as const satisfies readonly ClampArrow[]);
const connectionPointSchema = z.enum(CONNECTION_POINTS as unknown as [ConnectionPoint, ...ConnectionPoint[]]);
const conductorSchema = z.enum(CONDUCTORS as unknown as [Conductor, ...Conductor[]]);

const carInputs = [
  z.object({ kind: z.literal('key'), atMs: simTimeMsSchema, position: keyPositionSchema }),
  z.object({ kind: z.literal('rpm'), atMs: simTimeMsSchema, rpm: z.number().min(0).max(MAX_EVENT_RPM) }),
  z.object({ kind: z.literal('accessory'), atMs: simTimeMsSchema, id: idSchema, on: z.boolean() }),
  z.object({ kind: z.literal('pile'), atMs: simTimeMsSchema, dial01: z.number().min(0).max(1) }),
  z.object({ kind: z.literal('lead'), atMs: simTimeMsSchema, which: leadColourSchema, point: connectionPointSchema.nullable() }),
  z.object({ kind: z.literal('clamp'), atMs: simTimeMsSchema, conductor: conductorSchema.nullable(), arrow: clampArrowSchema }),
  z.object({ kind: z.literal('clamp-zero'), atMs: simTimeMsSchema }),
  z.object({ kind: z.literal('ammeter'), atMs: simTimeMsSchema, inSeries: z.boolean() }),
  z.object({ kind: z.literal('ammeter-fuse'), atMs: simTimeMsSchema }),
  z.object({ kind: z.literal('bplus-disconnect'), atMs: simTimeMsSchema, connected: z.boolean() }),
  z.object({ kind: z.literal('change-apply'), atMs: simTimeMsSchema, change: carChangeSchema }),
  z.object({ kind: z.literal('change-clear'), atMs: simTimeMsSchema, changeId: idSchema }),
] as const;

/** Every kind and field of the model's input events, with bounds (faults as events are the model's and the tests' own: the log speaks of changes). */
export const inputEventSchema = z.discriminatedUnion('kind', [
  ...carInputs,
  z.object({ kind: z.literal('fault-inject'), atMs: simTimeMsSchema, fault: faultSchema }),
  z.object({ kind: z.literal('fault-clear'), atMs: simTimeMsSchema, faultId: idSchema }),
]) satisfies z.ZodType<InputEvent>;

export const READING_UNITS = {
  voltage: ['V'],
  current: ['A'],
  ripple: ['mV', 'V'],
  rpm: ['rpm'],
  draw: ['mA', 'A'],
} as const;
export type ReadingQuantity = keyof typeof READING_UNITS;
export const readingQuantitySchema = z.enum(['voltage', 'current', 'ripple', 'rpm', 'draw']);
export const readingUnitSchema = z.enum(['V', 'A', 'mV', 'mA', 'rpm']);

export const recordedReadingSchema = z
  .object({
    /** Made by the bench (a uuid), so a reading can be matched to its result. */
    id: z.string().min(1).max(64),
    test: diagnosticTestSchema,
    quantity: readingQuantitySchema,
    value: z.number().finite(),
    unit: readingUnitSchema,
    /** The display tick whose value was written down (sim ms). */
    atMs: simTimeMsSchema,
    /** Where it was taken, in words: "battery posts, engine at 2,000 rpm, pile loaded". */
    where: z.string().max(200).default(''),
  })
  .superRefine((r, ctx) => {
    const allowed: readonly string[] = READING_UNITS[r.quantity];
    if (!allowed.includes(r.unit)) {
      ctx.addIssue({ code: 'custom', path: ['unit'], message: `a ${r.quantity} reading is in ${allowed.join(' or ')}` });
    }
  });
export type RecordedReading = z.infer<typeof recordedReadingSchema>;

/**
 * The student's notes a log stores beside the car's inputs: a reading
 * recorded or struck out (`atMs` is when it was logged; the reading's own
 * `atMs` is the tick it shows), and a hint opened (`index` into the
 * scenario's hints). None of them is an input of the model.
 */
export type ReadingEvent =
  | { kind: 'reading'; atMs: number; reading: RecordedReading }
  | { kind: 'reading-remove'; atMs: number; readingId: string }
  | { kind: 'hint'; atMs: number; index: number };

/** The model's inputs a log holds (faults as events are the model's and the tests' own; the log speaks of changes). */
export type CarInput = Exclude<InputEvent, { kind: 'fault-inject' } | { kind: 'fault-clear' }>;

/** What the attempt's log holds: the car's inputs and the readings. */
export type LogEvent = CarInput | ReadingEvent;

/** Longest a reading may be written down after the tick it shows. */
export const READING_LAG_MS = 1000;

export const readingEventSchema = z.discriminatedUnion('kind', [
  z.object({ kind: z.literal('reading'), atMs: simTimeMsSchema, reading: recordedReadingSchema }),
  z.object({ kind: z.literal('reading-remove'), atMs: simTimeMsSchema, readingId: z.string().min(1).max(64) }),
  z.object({ kind: z.literal('hint'), atMs: simTimeMsSchema, index: z.number().int('a hint index is a whole number').min(0).max(9, 'a scenario has at most 10 hints') }),
]);

/** A note of the student's in the log (a reading or a hint), not an input of the model. */
export const isNoteEvent = (e: { kind: string }): e is ReadingEvent => e.kind === 'reading' || e.kind === 'reading-remove' || e.kind === 'hint';

/** What a bench may log: the car's inputs, changes that log an instructor's injection, and readings. */
export const logEventSchema = z.discriminatedUnion('kind', [...carInputs, ...readingEventSchema.options]);

/** The model's events of a log, in order (readings are the student's notes, not inputs). */
export function modelEvents(events: readonly LogEvent[]): CarInput[] {
  return events.filter((e): e is CarInput => !isNoteEvent(e));
}

/** The hints a log shows opened by `untilMs` (each once, by its index), in the order opened. */
export function hintsOfLog(events: readonly LogEvent[], untilMs = Number.POSITIVE_INFINITY): number[] {
  const opened: number[] = [];
  for (const e of events) if (e.kind === 'hint' && e.atMs <= untilMs && !opened.includes(e.index)) opened.push(e.index);
  return opened;
}

/** The readings a log ends with: each recorded one not struck out since, in the order recorded. */
export function readingsOfLog(events: readonly LogEvent[]): RecordedReading[] {
  const kept = new Map<string, RecordedReading>();
  for (const e of events) {
    if (e.kind === 'reading') kept.set(e.reading.id, e.reading);
    else if (e.kind === 'reading-remove') kept.delete(e.readingId);
  }
  return [...kept.values()];
}

export const storedEventSchema = z.object({
  seq: z.number().int().positive('seq must be a positive whole number'),
  event: logEventSchema,
});
export type StoredEvent = { seq: number; event: LogEvent };

/**
 * POST /api/attempts/:id/events. Idempotent: an event whose seq is already
 * stored is skipped, so a retried batch is stored once. A change is taken
 * only as the log of an instructor's injection delivered to this bench. Sim
 * times never run back: a batch with an event earlier than one before it in
 * the log is refused (409, naming the event).
 */
export const postEventsSchema = z.object({
  events: z
    .array(storedEventSchema)
    .min(1, 'send at least one event')
    .max(MAX_EVENTS_PER_BATCH, `send at most ${MAX_EVENTS_PER_BATCH} events per batch`)
    .superRefine((events, ctx) => {
      const seen = new Set<number>();
      events.forEach((e, i) => {
        if (seen.has(e.seq)) ctx.addIssue({ code: 'custom', path: [i, 'seq'], message: `seq ${e.seq} appears twice in the batch` });
        seen.add(e.seq);
      });
    }),
});
export type PostEventsInput = z.infer<typeof postEventsSchema>;

/**
 * `lastSeq` is the highest seq up to which every event from 1 is stored (the
 * bench resends everything after it); `stored` counts the events of this
 * batch that were new.
 */
export const postEventsResponseSchema = z.object({ lastSeq: z.number().int(), stored: z.number().int() });
export type PostEventsResponse = z.infer<typeof postEventsResponseSchema>;

export const verdictSchema = z.object({ test: diagnosticTestSchema, pass: z.boolean() });

export const submitSchema = z
  .object({
    /** Sim time at which the student submitted. */
    atMs: simTimeMsSchema,
    diagnosis: z.object({
      verdicts: z.array(verdictSchema).max(DIAGNOSTIC_TESTS.length),
      faultKind: diagnosisChoiceSchema,
      notes: z.string().max(2000, 'notes must be at most 2000 characters').default(''),
    }),
  })
  .superRefine((s, ctx) => {
    const tests = new Set<string>();
    s.diagnosis.verdicts.forEach((v, i) => {
      if (tests.has(v.test)) ctx.addIssue({ code: 'custom', path: ['diagnosis', 'verdicts', i, 'test'], message: `${v.test} has two verdicts` });
      tests.add(v.test);
    });
  });
export type SubmitInput = z.infer<typeof submitSchema>;

const positiveIdField = idField;

/** POST /api/attempts: `{ assignmentId }` for an assignment, or `{ scenarioId, mode: 'practice' }`. */
export const startAttemptSchema = z
  .strictObject({
    assignmentId: positiveIdField('assignmentId').optional(),
    scenarioId: positiveIdField('scenarioId').optional(),
    mode: z.literal('practice', { error: 'mode must be "practice" (assigned attempts are started with assignmentId)' }).optional(),
  })
  .superRefine((v, ctx) => {
    if (v.assignmentId !== undefined) {
      if (v.scenarioId !== undefined || v.mode !== undefined) {
        ctx.addIssue({ code: 'custom', path: ['assignmentId'], message: 'send either assignmentId, or scenarioId with mode "practice", not both' });
      }
      return;
    }
    if (v.scenarioId === undefined) ctx.addIssue({ code: 'custom', path: ['scenarioId'], message: 'send assignmentId, or scenarioId with mode "practice"' });
    if (v.mode === undefined) ctx.addIssue({ code: 'custom', path: ['mode'], message: 'mode must be "practice" for a practice run' });
  })
  .transform((v): { assignmentId: number } | { scenarioId: number; mode: 'practice' } =>
    v.assignmentId !== undefined ? { assignmentId: v.assignmentId } : { scenarioId: v.scenarioId!, mode: 'practice' },
  );
export type StartAttemptInput = z.output<typeof startAttemptSchema>;

export const attemptIdParamsSchema = z.object({ id: idParam('id') });

export const MISTAKE_KINDS = [
  'reversed-clamp',
  'reversed-leads',
  'blown-fusible-link',
  'link-overloaded',
  'pile-overheated',
  'long-loaded-test',
  'bplus-removed-running',
  'battery-run-down',
  'engine-stalled',
] as const;
export const mistakeKindSchema = z.enum(MISTAKE_KINDS);
export type MistakeKind = z.infer<typeof mistakeKindSchema>;

/** Short names of the mistakes, for tables and exports. */
export const MISTAKE_LABELS: Readonly<Record<MistakeKind, string>> = {
  'reversed-clamp': 'Clamp reversed',
  'reversed-leads': 'Leads reversed',
  'blown-fusible-link': 'Fusible link burnt open',
  'link-overloaded': 'Fusible link held over its rating',
  'pile-overheated': 'Pile overheated',
  'long-loaded-test': 'Load held too long',
  'bplus-removed-running': 'B+ lead removed with the engine running',
  'battery-run-down': 'Battery run down',
  'engine-stalled': 'Engine stalled',
};

/** A mistake kind's name, or a plain word for one this version does not know. */
export const mistakeLabel = (kind: string): string => ((MISTAKE_KINDS as readonly string[]).includes(kind) ? MISTAKE_LABELS[kind as MistakeKind] : 'Other mistake');

/** Points of the grade of an assigned attempt; how each part is earned is in docs/grading.md and the result's `scoring`. */
export const GRADE_WEIGHTS = { evidence: 40, verdicts: 20, fault: 20, process: 20 } as const;
/** Process points lost per kind of process mistake found in the re-run. */
export const PROCESS_DEDUCTION = 10;

const outputCurvePointSchema = z.object({ altRpm: z.number(), currentA: z.number() }) satisfies z.ZodType<OutputCurvePoint>;

/** Why the server did not take a bench's log of an instructor's injection as it stands. */
export const INTEGRITY_FLAG_KINDS = ['injection-not-logged', 'injection-logged-late', 'injection-other-onset', 'injection-out-of-order'] as const;
export const integrityFlagSchema = z.object({
  kind: z.enum(INTEGRITY_FLAG_KINDS),
  injectionId: z.number().int(),
  /** The sim time the server applied the injection at. */
  appliedAtMs: z.number().int(),
  message: z.string(),
});
export type IntegrityFlag = z.infer<typeof integrityFlagSchema>;

const points = z.object({ evidence: z.number(), verdicts: z.number(), fault: z.number(), process: z.number() });

export const readingCheckSchema = z.object({
  id: z.string(),
  test: diagnosticTestSchema,
  quantity: readingQuantitySchema,
  value: z.number(),
  unit: readingUnitSchema,
  /** The display tick the reading shows. */
  atMs: z.number().int(),
  /** What the bench showed then, in the reading's unit (null: no meter for that quantity, or hidden). */
  shown: z.number().nullable(),
  /** The value written down is what the bench showed (null: hidden until results show). */
  valueOk: z.boolean().nullable(),
  /** The test's set-up held at that moment. */
  inSetup: z.boolean(),
  /** Counts as evidence for its test (value right, inside the set-up; null: hidden). */
  evidence: z.boolean().nullable(),
  /** In words: why it counts or does not. */
  reason: z.string(),
  /** What was missing of the set-up then. */
  unmet: z.array(z.string()),
});
export type ReadingCheck = z.infer<typeof readingCheckSchema>;

export const attemptResultSchema = z.object({
  /** 0..100 for an assigned attempt; null in practice mode (ungraded) and while results are hidden. */
  grade: z.number().min(0).max(100).nullable(),
  /** Every expected test has evidence, every reading was what the bench showed, and the bench logged what the server sent it (null while hidden). */
  verified: z.boolean().nullable(),
  /** How the grade was made: the weights and the points of each part (null in practice and while hidden). */
  scoring: z.object({ weights: points, points, processDeduction: z.number(), hintDeduction: z.number().optional() }).nullable(),
  /** The scenario's hints the student opened before submitting, and what each cost (absent on results graded before hints were logged). */
  hints: z.object({ opened: z.number().int().min(0), pointsEach: z.number().min(0) }).optional(),
  /** Set when the student may not see everything yet: practice results reveal nothing a live car would not; an assignment may hide results until it closes. */
  hidden: z.object({ reason: z.enum(['practice', 'until-close']), until: z.string().nullable() }).nullable(),
  readings: z.array(readingCheckSchema),
  verdicts: z.array(
    z.object({
      test: diagnosticTestSchema,
      given: z.boolean().nullable(),
      /** The right verdict on this car (null while hidden). */
      correct: z.boolean().nullable(),
      ok: z.boolean().nullable(),
      /** The test has evidence (a verdict counts only then). */
      evidenced: z.boolean(),
    }),
  ),
  fault: z.object({
    given: diagnosisChoiceSchema,
    /** The car's faults (null while hidden). */
    actual: z.array(diagnosisChoiceSchema).nullable(),
    ok: z.boolean().nullable(),
    /** Labels of the actual faults, or the healthy label (empty while hidden). */
    labels: z.array(z.string()),
  }),
  /** Sim time from the start of the attempt to the submission. */
  timeToDiagnosisMs: z.number().int(),
  /** What the re-run shows of how the work was done; `process` ones cost process points. */
  mistakes: z.array(z.object({ kind: mistakeKindSchema, atMs: z.number().int(), message: z.string(), process: z.boolean() })),
  /** The bench did not log an instructor's injection as the server sent it: graded on the server's time, for the instructor to look at. */
  flags: z.array(integrityFlagSchema),
  feedback: z.array(z.string()),
  /** Only when the assignment shows the curve, once results show. */
  outputCurve: z.object({ healthy: z.array(outputCurvePointSchema), fitted: z.array(outputCurvePointSchema) }).optional(),
  /** The student's own output readings placed on the curve. */
  measuredPoints: z.array(outputCurvePointSchema).optional(),
});
export type AttemptResult = z.infer<typeof attemptResultSchema>;

/**
 * The scenario as the bench shows it before submission: the scenario's
 * student view (no faults, no tests expected, no raw parameters), with the
 * diagnosis choices labelled and the whole family of tests to choose from.
 */
export interface BenchScenarioView extends Omit<StudentScenarioView, 'diagnosisChoices'> {
  diagnosisChoices: { value: DiagnosisChoice; label: string }[];
  tests: { test: DiagnosticTest; label: string }[];
}
export const benchScenarioViewSchema = z.custom<BenchScenarioView>((v) => typeof v === 'object' && v !== null);

/**
 * The bench's view of a scenario: the student's view with labelled diagnosis
 * choices and every test of the family. An assignment with a fault pool offers
 * the choices of the whole pool (`choices`), so the list says nothing of which
 * car was drawn.
 */
export function benchScenarioView(def: ScenarioDefinition, choices: ScenarioDefinition['diagnosisChoices'] | null = null): BenchScenarioView {
  const view = studentScenarioView(choices ? { ...def, diagnosisChoices: choices } : def);
  return {
    ...view,
    diagnosisChoices: view.diagnosisChoices.map((value) => ({ value, label: diagnosisLabel(value) })),
    tests: DIAGNOSTIC_TESTS.map((test) => ({ test, label: DIAGNOSTIC_TEST_LABELS[test] })),
  };
}

export const attemptModeSchema = z.enum(['assigned', 'practice']);
export const attemptStatusSchema = z.enum(['running', 'submitted']);

/** Response of POST /api/attempts (201) and GET /api/attempts/:id. */
export const attemptBootstrapSchema = z.object({
  attempt: z.object({
    id: z.number().int(),
    mode: attemptModeSchema,
    status: attemptStatusSchema,
    seed: z.number().int(),
    startedAt: z.string(),
    assignmentId: z.number().int().nullable(),
    lastSeq: z.number().int(),
    showCurveAfter: z.boolean(),
    showFeedbackAfter: z.boolean(),
    /** When results show, for an assignment that hides them until it closes (null: at submission). */
    resultsAt: z.string().nullable(),
  }),
  scenario: benchScenarioViewSchema,
  /**
   * The car to simulate: its parameters with the permanent faults applied,
   * and a schedule of parameter changes for the rest (shared/car.ts). No
   * fault kind, label or severity.
   */
  car: z.custom<CompiledCar>((v) => typeof v === 'object' && v !== null),
  /** Everything stored so far, ordered by seq (for resuming after a reload or on another device), readings included. */
  events: z.array(storedEventSchema),
  result: attemptResultSchema.nullable(),
});
export type AttemptBootstrap = z.infer<typeof attemptBootstrapSchema>;

export const myAttemptRowSchema = z.object({
  id: z.number().int(),
  scenarioTitle: z.string(),
  mode: attemptModeSchema,
  status: attemptStatusSchema,
  startedAt: z.string(),
  submittedAt: z.string().nullable(),
  timeToDiagnosisMs: z.number().int().nullable(),
  /** Null in practice and while the assignment hides results. */
  grade: z.number().nullable(),
  assignmentTitle: z.string().nullable(),
  /** When a hidden result shows (the assignment's due date), else null. */
  resultsAt: z.string().nullable(),
});
export type MyAttemptRow = z.infer<typeof myAttemptRowSchema>;
export const myAttemptsResponseSchema = z.object({ attempts: z.array(myAttemptRowSchema) });
export type MyAttemptsResponse = z.infer<typeof myAttemptsResponseSchema>;
