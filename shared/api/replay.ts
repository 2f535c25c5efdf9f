/**
 * Replays of submitted attempts (/api/replay): everything the model needs to
 * re-run the attempt in the browser (the vehicle, the seed, the events with
 * the scenario's faults first), the moments worth jumping to, the readings the
 * student wrote down, and the instructors' comments on moments.
 */
import { z } from 'zod';
import type { VehicleParams } from '../../sim/params.ts';
import { inputEventSchema, MAX_ATTEMPT_MS } from './attempts.ts';
import { idParam } from './ids.ts';

export const replayParamsSchema = z.object({ id: idParam('id') });

export const MARKER_KINDS = ['hook-up', 'start', 'load', 'fault', 'reading', 'submission'] as const;
export type MarkerKind = (typeof MARKER_KINDS)[number];
export const MARKER_LABELS: Readonly<Record<MarkerKind, string>> = {
  'hook-up': 'Hook-up',
  start: 'Start',
  load: 'Load change',
  fault: 'Injected fault',
  reading: 'Reading recorded',
  submission: 'Submission',
};

export const markerSchema = z.object({ atMs: z.number().int(), kind: z.enum(MARKER_KINDS), label: z.string() });
export type Marker = z.infer<typeof markerSchema>;

export const replayReadingSchema = z.object({
  id: z.string(),
  test: z.string(),
  quantity: z.string(),
  value: z.number(),
  unit: z.string(),
  atMs: z.number(),
  where: z.string(),
});
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
    grade: z.number().nullable(),
  }),
  vehicle: z.custom<VehicleParams>((v) => typeof v === 'object' && v !== null),
  /** The scenario's faults at 0 ms, then the stored log in order. */
  events: z.array(inputEventSchema),
  markers: z.array(markerSchema),
  readings: z.array(replayReadingSchema),
  comments: z.array(commentSchema),
  /** The viewer teaches the class and may comment. */
  canComment: z.boolean(),
});
export type ReplayResponse = z.infer<typeof replayResponseSchema>;
