/**
 * Live class sessions: the instructor's board of running attempts, fault
 * injection into a running bench, and what the bench's stream carries.
 *
 * An injection is a row of pending_injections whose `action` is a
 * `PendingAction`. The server sends the bench the change the injection makes
 * to the car (parameter operations under the id `liveFaultId(injectionId)`,
 * never the fault's kind or severity) and records when it delivered it. The
 * bench applies it at its current sim time, the onset counted from there, and
 * logs it as a `change-apply` / `change-clear` event; storing that event marks
 * the injection applied. The server is the authority on when it counts:
 * server/live/injection-authority.ts.
 */
import { z } from 'zod';
import { FAULT_KINDS, type FaultKind } from '../../sim/faults.ts';
import { INTEGRITY_FLAG_KINDS } from './attempts.ts';
import { carChangeSchema } from '../car.ts';
import { DIAGNOSTIC_TESTS } from '../scenario.ts';
import { idField, idParam } from './ids.ts';
import { MAX_ATTEMPT_MS } from './attempts.ts';

export const LIVE_FAULT_PREFIX = 'live-';

/** The fault id the bench logs for an injected fault. */
export const liveFaultId = (injectionId: number): string => `${LIVE_FAULT_PREFIX}${injectionId}`;

export const LIVE_BOUNDS = {
  delayS: { min: 0, max: 3600 },
  periodS: { min: 0.5, max: 600 },
  onFraction01: { min: 0.05, max: 1 },
} as const;

const faultKindSchema = z.enum(FAULT_KINDS as unknown as [FaultKind, ...FaultKind[]], {
  error: `kind must be one of: ${FAULT_KINDS.join(', ')}`,
});

export const intermittentSchema = z.strictObject({
  periodS: z
    .number({ error: 'intermittent.periodS must be a number of seconds' })
    .min(LIVE_BOUNDS.periodS.min, `intermittent.periodS must be at least ${LIVE_BOUNDS.periodS.min} s`)
    .max(LIVE_BOUNDS.periodS.max, `intermittent.periodS must be at most ${LIVE_BOUNDS.periodS.max} s`),
  onFraction01: z
    .number({ error: 'intermittent.onFraction01 must be a number' })
    .min(LIVE_BOUNDS.onFraction01.min, `intermittent.onFraction01 must be at least ${LIVE_BOUNDS.onFraction01.min}`)
    .max(LIVE_BOUNDS.onFraction01.max, 'intermittent.onFraction01 must be at most 1'),
});
export type LiveIntermittent = z.infer<typeof intermittentSchema>;

const positiveId = idField;

/** POST /api/live/attempts/:id/inject */
export const injectSchema = z.strictObject({
  kind: faultKindSchema,
  severity01: z.number({ error: 'severity01 must be a number from 0 to 1' }).min(0, 'severity01 must be at least 0').max(1, 'severity01 must be at most 1').default(1),
  /** Seconds of sim time after the bench receives it (0: at once). */
  delayS: z
    .number({ error: 'delayS must be a number of seconds' })
    .min(LIVE_BOUNDS.delayS.min, 'delayS must not be negative')
    .max(LIVE_BOUNDS.delayS.max, `delayS must be at most ${LIVE_BOUNDS.delayS.max} s`)
    .default(0),
  intermittent: intermittentSchema.nullable().default(null),
});
export type InjectInput = z.input<typeof injectSchema>;

/** POST /api/live/attempts/:id/clear */
export const clearSchema = z.strictObject({ injectionId: positiveId('injectionId') });
export type ClearInput = z.infer<typeof clearSchema>;

export const attemptParamsSchema = z.object({ id: idParam('id') });
export const classParamsSchema = z.object({ classId: idParam('classId') });

/** The `action` column of pending_injections. */
export const pendingActionSchema = z.discriminatedUnion('type', [
  z.object({
    type: z.literal('inject'),
    faultId: z.string(),
    kind: faultKindSchema,
    severity01: z.number(),
    delayS: z.number(),
    intermittent: intermittentSchema.nullable(),
  }),
  z.object({ type: z.literal('clear'), faultId: z.string(), targetInjectionId: z.number().int() }),
]);
export type PendingAction = z.infer<typeof pendingActionSchema>;

/**
 * One message on the bench's stream (SSE event `injection`). For an inject,
 * the change to apply: its `onsetS` is the delay after the bench's current
 * sim time. For a clear, the id of the change to take away.
 */
export const benchInjectionSchema = z.discriminatedUnion('type', [
  z.object({ type: z.literal('inject'), injectionId: z.number().int(), change: carChangeSchema }),
  z.object({ type: z.literal('clear'), injectionId: z.number().int(), changeId: z.string() }),
]);
export type BenchInjection = z.infer<typeof benchInjectionSchema>;

export const injectionViewSchema = z.object({
  injectionId: z.number().int(),
  type: z.enum(['inject', 'clear']),
  faultId: z.string(),
  kind: faultKindSchema.nullable(),
  severity01: z.number().nullable(),
  delayS: z.number().nullable(),
  intermittent: intermittentSchema.nullable(),
  createdAt: z.string(),
  /** When the server sent it to the bench (null: the bench has not connected since). */
  deliveredAt: z.string().nullable(),
  appliedAt: z.string().nullable(),
  /** For an inject: a later clear of it exists. */
  cleared: z.boolean(),
  /**
   * waiting: not delivered yet; delivered: sent, the bench has not logged it yet;
   * applied: the bench logged it as sent; flagged: it did not, and the server applies it at its own time.
   */
  status: z.enum(['waiting', 'delivered', 'applied', 'flagged']),
  /** The sim time it applies from in the server's runs. */
  appliedAtMs: z.number().int().nullable(),
  flag: z.object({ kind: z.enum(INTEGRITY_FLAG_KINDS), message: z.string() }).nullable(),
});
export type InjectionView = z.infer<typeof injectionViewSchema>;

export const injectResponseSchema = z.object({ injection: injectionViewSchema });

export const liveReadingsSchema = z.object({
  voltmeterV: z.number().nullable(),
  rippleVac: z.number().nullable(),
  clampA: z.number().nullable(),
  tachRpm: z.number(),
  ammeterA: z.number().nullable(),
  pileA: z.number(),
  engine: z.string(),
  batterySoc01: z.number(),
  /** The carbon pile past its warning temperature, and cut out. */
  pileHot: z.boolean(),
  pileOverheated: z.boolean(),
  /** The fusible link burnt open during the attempt. */
  linkBlown: z.boolean(),
});
export type LiveReadings = z.infer<typeof liveReadingsSchema>;

/** One attempt on the board; also the SSE event `attempt`: one attempt changed (it may have ended: status submitted). */
export const boardAttemptSchema = z.object({
  attemptId: z.number().int(),
  studentId: z.number().int(),
  studentName: z.string(),
  scenarioTitle: z.string(),
  assignmentId: z.number().int().nullable(),
  assignmentTitle: z.string().nullable(),
  mode: z.string(),
  status: z.enum(['running', 'submitted']),
  startedAt: z.string(),
  /** Sim time the board shows: the bench's own clock as it last reported it, or the latest stored event's if later. */
  simTimeMs: z.number().int(),
  lastSeq: z.number().int(),
  /** The test the bench is set up for at that moment, as the server's re-run sees it. */
  currentTest: z.enum(DIAGNOSTIC_TESTS).nullable(),
  /** The meters at that moment in the server's re-run (null while the model cannot run). */
  readings: liveReadingsSchema.nullable(),
  /** The readings the student has recorded so far, as stored in the log (newest last). */
  recorded: z.array(z.object({ id: z.string(), test: z.enum(DIAGNOSTIC_TESTS), value: z.number(), unit: z.string(), atMs: z.number() })),
  injections: z.array(injectionViewSchema),
  /** An injection was not logged by the bench as the server sent it. */
  flagged: z.boolean(),
  /** When the last batch of events arrived. */
  lastActivityAt: z.string().nullable(),
  /** When the bench, open in a browser, last reported its clock (null: never). */
  benchSeenAt: z.string().nullable(),
});
export type BoardAttempt = z.infer<typeof boardAttemptSchema>;

/** The open bench reports its clock this often, so the board can show the meters as they are now. */
export const BENCH_CLOCK_INTERVAL_MS = 5_000;
/** A bench that has not reported its clock for this long is closed or hidden. */
export const BENCH_GONE_AFTER_MS = 20_000;
/** A bench with no input for this long is idle. */
export const BENCH_IDLE_AFTER_MS = 3 * 60_000;

/** POST /api/attempts/:id/clock: the bench's sim time now. */
export const benchClockSchema = z.strictObject({
  simTimeMs: z
    .number({ error: 'simTimeMs must be a number of milliseconds' })
    .int('simTimeMs must be a whole number of milliseconds')
    .min(0, 'simTimeMs must not be negative')
    .max(MAX_ATTEMPT_MS, `simTimeMs must be at most ${MAX_ATTEMPT_MS} (four hours)`),
});

/** The answer to a clock report: whether the attempt still runs (false once it was submitted, perhaps from another device). */
export const benchClockAnswerSchema = z.object({ running: z.boolean() });
export type BenchClockAnswer = z.infer<typeof benchClockAnswerSchema>;

export const boardSnapshotSchema = z.object({ classId: z.number().int(), className: z.string(), attempts: z.array(boardAttemptSchema) });
export type BoardSnapshot = z.infer<typeof boardSnapshotSchema>;
