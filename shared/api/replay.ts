/**
 * Replays of submitted attempts (/api/replay): everything the model needs to
 * re-run the attempt in the browser as the server graded it (the compiled
 * car, the seed, the model's events with the instructor's injections where
 * the server applied them), the moments worth jumping to, the readings the
 * student recorded each with its verdict, and the instructors' comments.
 */
import { z } from 'zod';
import type { CompiledCar } from '../../sim/compiled-car.ts';
import { inputEventSchema, MAX_ATTEMPT_MS, readingCheckSchema } from './attempts.ts';
import { idParam } from './ids.ts';

export const replayParamsSchema = z.object({ id: idParam('id') });

export const MARKER_KINDS = ['hook-up', 'start', 'load', 'fault', 'reading', 'hint', 'submission'] as const;
export type MarkerKind = (typeof MARKER_KINDS)[number];
export const MARKER_LABELS: Readonly<Record<MarkerKind, string>> = {
  'hook-up': 'Hook-up',
  start: 'Start',
  load: 'Load change',
  fault: 'Injected fault',
  reading: 'Reading recorded',
  hint: 'Hint opened',
  submission: 'Submission',
};

export const markerSchema = z.object({ atMs: z.number().int(), kind: z.enum(MARKER_KINDS), label: z.string() });
export type Marker = z.infer<typeof markerSchema>;

/** A recorded reading with its verdict as graded (what was missing of the set-up, what the bench showed). */
export const replayReadingSchema = readingCheckSchema.extend({ where: z.string() });
export type ReplayReading = z.infer<typeof replayReadingSchema>;

export const commentSchema = z.object({
  id: z.number().int(),
  simTimeMs: z.number().int(),
  body: z.string(),
  authorName: z.string(),
  createdAt: z.string(),
});
export type ReplayComment = z.infer<typeof commentSchema>;

export const COMMENT_MAX = 2000;
export const createCommentSchema = z.strictObject({
  simTimeMs: z
    .number({ error: 'simTimeMs is required (the moment, in sim milliseconds)' })
    .int('simTimeMs must be a whole number of milliseconds')
    .min(0, 'simTimeMs must not be negative')
    .max(MAX_ATTEMPT_MS, 'simTimeMs must be within the attempt'),
  body: z.string({ error: 'body is required' }).trim().min(1, 'body must not be empty').max(COMMENT_MAX, `body must be at most ${COMMENT_MAX} characters`),
});
export type CreateCommentInput = z.infer<typeof createCommentSchema>;

export const replayResponseSchema = z.object({
  attempt: z.object({
    id: z.number().int(),
    studentId: z.number().int(),
    studentName: z.string(),
    scenarioTitle: z.string(),
    assignmentTitle: z.string().nullable(),
    seed: z.number().int(),
    /** Sim time the replay runs to: the submission, or the last event. */
    durationMs: z.number().int(),
    submittedAtMs: z.number().int().nullable(),
    /** Null while the result is hidden from the viewer. */
    grade: z.number().nullable(),
    /** When results show, for an assignment that hides them until it closes. */
    resultsAt: z.string().nullable(),
  }),
  /** The car the bench ran. */
  car: z.custom<CompiledCar>((v) => typeof v === 'object' && v !== null),
  /** The model's events the server graded on, in order. */
  events: z.array(inputEventSchema),
  /** The labels of the scenario's faults, those the car has from the start or by its schedule; injections are in changeLabels (both empty while hidden from the viewer). */
  faultLabels: z.array(z.string()),
  /** What each scheduled or injected change stands for, by change id (empty while hidden). */
  changeLabels: z.record(z.string(), z.string()),
  markers: z.array(markerSchema),
  readings: z.array(replayReadingSchema),
  comments: z.array(commentSchema),
  /** The viewer teaches the class and may comment. */
  canComment: z.boolean(),
});
export type ReplayResponse = z.infer<typeof replayResponseSchema>;
