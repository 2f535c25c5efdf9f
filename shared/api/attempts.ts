/**
 * The bench's contract with the server: starting an attempt, the event log,
 * submission and the graded result. The bootstrap never carries the
 * scenario's faults in readable form (see docs/decisions/001-sealed-faults.md).
 */
import { z } from 'zod';
import type { DiagnosticTest } from '../../sim/faults.ts';
import type { ClampArrow, Conductor, ConnectionPoint, InputEvent, KeyPosition, LeadColour } from '../../sim/inputs.ts';
import { CONDUCTORS, CONNECTION_POINTS } from '../../sim/inputs.ts';
import type { OutputCurvePoint } from '../../sim/instruments.ts';
import type { VehicleParams } from '../../sim/params.ts';
import type { DiagnosisChoice, ScenarioDefinition, StudentScenarioView } from '../scenario.ts';
import { DIAGNOSTIC_TEST_LABELS, DIAGNOSTIC_TESTS, diagnosisChoiceSchema, diagnosisLabel, diagnosticTestSchema, faultSchema, studentScenarioView } from '../scenario.ts';

// Imported from here by the live-session contract; the list itself lives with the scenario document.
export { DIAGNOSTIC_TESTS };

/** Longest attempt the server replays: four hours of sim time. */
export const MAX_ATTEMPT_MS = 4 * 60 * 60 * 1000;
/** Highest engine speed a bench event may ask for. */
export const MAX_EVENT_RPM = 8000;
export const MAX_EVENTS_PER_BATCH = 500;
export const MAX_READINGS = 100;

const simTimeMsSchema = z
  .number()
  .int('atMs must be a whole number of milliseconds')
  .min(0, 'atMs must not be negative')
  .max(MAX_ATTEMPT_MS, `atMs must be at most ${MAX_ATTEMPT_MS} (four hours)`);

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

/** Every kind and field of the model's input events, with bounds. */
export const inputEventSchema = z.discriminatedUnion('kind', [
  z.object({ kind: z.literal('key'), atMs: simTimeMsSchema, position: keyPositionSchema }),
  z.object({ kind: z.literal('rpm'), atMs: simTimeMsSchema, rpm: z.number().min(0).max(MAX_EVENT_RPM) }),
  z.object({ kind: z.literal('accessory'), atMs: simTimeMsSchema, id: idSchema, on: z.boolean() }),
  z.object({ kind: z.literal('pile'), atMs: simTimeMsSchema, dial01: z.number().min(0).max(1) }),
  z.object({ kind: z.literal('lead'), atMs: simTimeMsSchema, which: leadColourSchema, point: connectionPointSchema.nullable() }),
  z.object({ kind: z.literal('clamp'), atMs: simTimeMsSchema, conductor: conductorSchema.nullable(), arrow: clampArrowSchema }),
  z.object({ kind: z.literal('clamp-zero'), atMs: simTimeMsSchema }),
  z.object({ kind: z.literal('ammeter'), atMs: simTimeMsSchema, inSeries: z.boolean() }),
  z.object({ kind: z.literal('bplus-disconnect'), atMs: simTimeMsSchema, connected: z.boolean() }),
  z.object({ kind: z.literal('fault-inject'), atMs: simTimeMsSchema, fault: faultSchema }),
  z.object({ kind: z.literal('fault-clear'), atMs: simTimeMsSchema, faultId: idSchema }),
]) satisfies z.ZodType<InputEvent>;

export const storedEventSchema = z.object({
  seq: z.number().int().positive('seq must be a positive whole number'),
  event: inputEventSchema,
});
export type StoredEvent = z.infer<typeof storedEventSchema>;

/**
 * POST /api/attempts/:id/events. Idempotent: an event whose seq is already
 * stored is skipped, so a retried batch is stored once. Fault events are
 * accepted only when they log an instructor's pending injection.
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
    /** Sim time at which the reading was written down. */
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

export const verdictSchema = z.object({ test: diagnosticTestSchema, pass: z.boolean() });

export const submitSchema = z
  .object({
    /** Sim time at which the student submitted. */
    atMs: simTimeMsSchema,
    readings: z.array(recordedReadingSchema).max(MAX_READINGS, `record at most ${MAX_READINGS} readings`),
    diagnosis: z.object({
      verdicts: z.array(verdictSchema).max(DIAGNOSTIC_TESTS.length),
      faultKind: diagnosisChoiceSchema,
      notes: z.string().max(2000, 'notes must be at most 2000 characters').default(''),
    }),
  })
  .superRefine((s, ctx) => {
    const ids = new Set<string>();
    s.readings.forEach((r, i) => {
      if (ids.has(r.id)) ctx.addIssue({ code: 'custom', path: ['readings', i, 'id'], message: `reading id ${r.id} appears twice` });
      ids.add(r.id);
      if (r.atMs > s.atMs) {
        ctx.addIssue({ code: 'custom', path: ['readings', i, 'atMs'], message: 'a reading cannot be later than the submission' });
      }
    });
    const tests = new Set<string>();
    s.diagnosis.verdicts.forEach((v, i) => {
      if (tests.has(v.test)) ctx.addIssue({ code: 'custom', path: ['diagnosis', 'verdicts', i, 'test'], message: `${v.test} has two verdicts` });
      tests.add(v.test);
    });
  });
export type SubmitInput = z.infer<typeof submitSchema>;

const positiveIdField = (field: string) =>
  z.number({ error: `${field} must be a number` }).int(`${field} must be a whole number`).positive(`${field} must be a positive whole number`);

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

export const attemptIdParamsSchema = z.object({ id: z.coerce.number().int().positive('id must be a positive whole number') });

export const MISTAKE_KINDS = [
  'reversed-clamp',
  'reversed-leads',
  'blown-fusible-link',
  'pile-overheated',
  'battery-run-down',
  'long-loaded-test',
  'engine-stalled',
] as const;
export const mistakeKindSchema = z.enum(MISTAKE_KINDS);
export type MistakeKind = z.infer<typeof mistakeKindSchema>;

/** Short names of the mistakes, for tables and exports. */
export const MISTAKE_LABELS: Readonly<Record<MistakeKind, string>> = {
  'reversed-clamp': 'Clamp reversed',
  'reversed-leads': 'Leads reversed',
  'blown-fusible-link': 'Fusible link burnt open',
  'pile-overheated': 'Pile overheated',
  'battery-run-down': 'Battery run down',
  'long-loaded-test': 'Load held too long',
  'engine-stalled': 'Engine stalled',
};

/** A mistake kind's name, or a plain word for one this version does not know. */
export const mistakeLabel = (kind: string): string => ((MISTAKE_KINDS as readonly string[]).includes(kind) ? MISTAKE_LABELS[kind as MistakeKind] : 'Other mistake');

const outputCurvePointSchema = z.object({ altRpm: z.number(), currentA: z.number() }) satisfies z.ZodType<OutputCurvePoint>;

export const attemptResultSchema = z.object({
  /** 0..100 for an assigned attempt; null in practice mode (ungraded). */
  grade: z.number().min(0).max(100).nullable(),
  /** Every reading matched the server's re-run of the model within tolerance. */
  verified: z.boolean(),
  readings: z.array(
    z.object({
      id: z.string(),
      test: diagnosticTestSchema,
      value: z.number(),
      unit: readingUnitSchema,
      /** What the meter showed at the reading's moment in the re-run (null: no meter gave that quantity). */
      expectedValue: z.number().nullable(),
      ok: z.boolean(),
      message: z.string(),
    }),
  ),
  verdicts: z.array(
    z.object({ test: diagnosticTestSchema, given: z.boolean().nullable(), correct: z.boolean(), ok: z.boolean() }),
  ),
  fault: z.object({
    given: diagnosisChoiceSchema,
    actual: z.array(diagnosisChoiceSchema),
    ok: z.boolean(),
    /** Labels of the actual faults (or the healthy label). */
    labels: z.array(z.string()),
  }),
  /** Sim time from the start of the attempt to the submission. */
  timeToDiagnosisMs: z.number().int(),
  mistakes: z.array(z.object({ kind: mistakeKindSchema, atMs: z.number().int(), message: z.string() })),
  /** Empty when the assignment hides feedback until later. */
  feedback: z.array(z.string()),
  /** Only when the assignment shows the curve (always in practice). */
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

/** The bench's view of a scenario: the student's view with labelled diagnosis choices and every test of the family. */
export function benchScenarioView(def: ScenarioDefinition): BenchScenarioView {
  const view = studentScenarioView(def);
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
  }),
  scenario: benchScenarioViewSchema,
  /** The healthy car; the scenario's faults come sealed. */
  vehicle: z.custom<VehicleParams>((v) => typeof v === 'object' && v !== null),
  /** The faults, AES-256-GCM sealed; open with `unsealFaults(sealedFaults, benchKey)` from shared/sealed-faults.ts. */
  sealedFaults: z.string(),
  /**
   * Null unless the scenario sets fault-like parameters directly; then the
   * car to run is `unsealVehicle(sealedVehicle, benchKey)` rather than `vehicle`.
   */
  sealedVehicle: z.string().nullable(),
  benchKey: z.string(),
  /**
   * Everything stored so far, ordered by seq (for resuming after a reload),
   * except fault events: those (an instructor's injections) are in
   * `sealedEvents`, to open with `unsealEvents(sealedEvents, benchKey)` and
   * merge by seq. Null when there are none.
   */
  events: z.array(storedEventSchema),
  sealedEvents: z.string().nullable(),
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
  grade: z.number().nullable(),
  assignmentTitle: z.string().nullable(),
});
export type MyAttemptRow = z.infer<typeof myAttemptRowSchema>;
export const myAttemptsResponseSchema = z.object({ attempts: z.array(myAttemptRowSchema) });
export type MyAttemptsResponse = z.infer<typeof myAttemptsResponseSchema>;
