/** Payloads of the assignments API (/api/assignments). */
import { z } from 'zod';
import { nameText } from '../names.ts';
import { DIFFICULTIES, VEHICLE_KINDS } from '../scenario.ts';
import { idField, idParam } from './ids.ts';

export const assignmentIdParamsSchema = z.object({ id: idParam('id') });

const isoDate = (field: string) =>
  z.iso.datetime({ offset: true, error: `${field} must be a date and time (ISO 8601, e.g. 2026-12-01T09:00:00Z)` });

export const createAssignmentSchema = z
  .strictObject({
    classId: idField('classId'),
    scenarioId: idField('scenarioId'),
    /** A version of that scenario; without it, the published version. */
    scenarioVersionId: idField('scenarioVersionId').optional(),
    title: nameText('title', 3, 160).optional(),
    opensAt: isoDate('opensAt'),
    dueAt: isoDate('dueAt'),
    attemptsAllowed: z.number({ error: 'attemptsAllowed is required' }).int('attemptsAllowed must be a whole number').min(1, 'attemptsAllowed must be at least 1').max(20, 'attemptsAllowed must be at most 20'),
    showCurveAfter: z.boolean().default(true),
    /** False: the grade, the fault, the expected verdicts and the values stay hidden from students until the due date. */
    showFeedbackAfter: z.boolean().default(true),
    /** Let the class practise the assignment's scenario versions while it is open or upcoming (off: they are withheld from practice). */
    allowPractice: z.boolean().default(false),
    /**
     * A fault pool: each student's car is drawn from these scenarios (their
     * published version, or the version named), fixed per student. They must
     * be one vehicle with several fault sets; the assignment's own scenario
     * is the first of the pool.
     */
    pool: z
      .array(
        z.strictObject({
          scenarioId: z.number({ error: 'pool: scenarioId is required' }).int().positive('pool: scenarioId must be a positive whole number'),
          scenarioVersionId: z.number().int().positive('pool: scenarioVersionId must be a positive whole number').optional(),
        }),
      )
      .max(12, 'pool: at most 12 scenarios')
      .default([]),
  })
  .refine((a) => Date.parse(a.dueAt) > Date.parse(a.opensAt), { error: 'dueAt must be after opensAt', path: ['dueAt'] });
export type CreateAssignmentInput = z.input<typeof createAssignmentSchema>;

/** PATCH /api/assignments/:id: any of the dates, the attempts, the title and what is shown after submission. */
export const updateAssignmentSchema = z
  .strictObject({
    title: z.string().trim().min(3, 'title must be at least 3 characters').max(160, 'title must be at most 160 characters').optional(),
    opensAt: isoDate('opensAt').optional(),
    dueAt: isoDate('dueAt').optional(),
    attemptsAllowed: z.number({ error: 'attemptsAllowed must be a number' }).int('attemptsAllowed must be a whole number').min(1, 'attemptsAllowed must be at least 1').max(20, 'attemptsAllowed must be at most 20').optional(),
    showCurveAfter: z.boolean().optional(),
    showFeedbackAfter: z.boolean().optional(),
  })
  .refine((a) => Object.values(a).some((v) => v !== undefined), { error: 'send at least one field to change' });
export type UpdateAssignmentInput = z.infer<typeof updateAssignmentSchema>;

export const extensionParamsSchema = z.object({
  id: z.coerce.number().int().positive('id must be a positive whole number'),
  userId: z.coerce.number().int().positive('userId must be a positive whole number'),
});

/** PUT /api/assignments/:id/extensions/:userId: one student's own due date (null: the assignment's) and extra attempts. */
export const extensionSchema = z
  .strictObject({
    dueAt: isoDate('dueAt').nullable(),
    extraAttempts: z.number({ error: 'extraAttempts must be a number' }).int('extraAttempts must be a whole number').min(0, 'extraAttempts must not be negative').max(20, 'extraAttempts must be at most 20'),
  })
  .refine((e) => e.dueAt !== null || e.extraAttempts > 0, { error: 'give a later due date, extra attempts, or both', path: ['dueAt'] });
export type ExtensionInput = z.infer<typeof extensionSchema>;

export const STUDENT_PROGRESS = ['not-started', 'in-progress', 'submitted'] as const;
export type StudentProgress = (typeof STUDENT_PROGRESS)[number];
export const PROGRESS_LABELS: Readonly<Record<StudentProgress, string>> = { 'not-started': 'Not started', 'in-progress': 'Started, not submitted', submitted: 'Submitted' };

/** GET /api/assignments/:id/students: every enrolled student, how far they are and their own terms. */
export const assignmentStudentSchema = z.object({
  studentId: z.number().int(),
  name: z.string(),
  email: z.string(),
  progress: z.enum(STUDENT_PROGRESS),
  attemptsUsed: z.number().int(),
  /** The assignment's attempts plus the student's extra ones. */
  attemptsAllowed: z.number().int(),
  /** The student's own due date when extended, else the assignment's. */
  dueAt: z.string(),
  extension: z.object({ dueAt: z.string().nullable(), extraAttempts: z.number().int() }).nullable(),
  /** The latest attempt, to open its replay. */
  latestAttemptId: z.number().int().nullable(),
});
export type AssignmentStudent = z.infer<typeof assignmentStudentSchema>;
export const assignmentStudentsResponseSchema = z.object({ students: z.array(assignmentStudentSchema) });

export const listAssignmentsQuerySchema = z.object({
  classId: idParam('classId'),
});

export const assignmentSchema = z.object({
  id: z.number().int(),
  classId: z.number().int(),
  className: z.string(),
  title: z.string(),
  scenarioId: z.number().int(),
  scenarioVersionId: z.number().int(),
  scenarioVersion: z.number().int(),
  opensAt: z.string(),
  dueAt: z.string(),
  attemptsAllowed: z.number().int(),
  showCurveAfter: z.boolean(),
  showFeedbackAfter: z.boolean(),
  allowPractice: z.boolean(),
  /** The versions a fault pool draws from (empty: every student gets the assignment's own version). */
  pool: z.array(z.object({ scenarioVersionId: z.number().int(), title: z.string(), faultLabels: z.array(z.string()) })),
  createdAt: z.string(),
});
export type Assignment = z.infer<typeof assignmentSchema>;
export const assignmentListResponseSchema = z.object({ assignments: z.array(assignmentSchema) });

/** A student's view of an assignment: what to do and when; nothing about the fault. */
export const myAssignmentSchema = z.object({
  id: z.number().int(),
  classId: z.number().int(),
  className: z.string(),
  title: z.string(),
  summary: z.string(),
  difficulty: z.enum(DIFFICULTIES),
  vehicleName: z.string(),
  vehicleKind: z.enum(VEHICLE_KINDS),
  opensAt: z.string(),
  dueAt: z.string(),
  attemptsAllowed: z.number().int(),
  attemptsUsed: z.number().int(),
  /** Past the due date: shown, but no new attempt can start. */
  closed: z.boolean(),
  showCurveAfter: z.boolean(),
  showFeedbackAfter: z.boolean(),
});
export type MyAssignment = z.infer<typeof myAssignmentSchema>;
export const myAssignmentsResponseSchema = z.object({ assignments: z.array(myAssignmentSchema) });
