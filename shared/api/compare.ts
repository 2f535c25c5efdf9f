/**
 * The class comparison of an assignment (/api/compare) and competency
 * sign-offs (/api/sign-offs). Each student counts with their latest submitted
 * attempt. Students see the distribution of diagnosis times and their own
 * place in it, never a classmate's name.
 */
import { z } from 'zod';
import { COMPETENCIES, competencySchema } from '../competencies.ts';
import { idField, idParam } from './ids.ts';

const id = idParam;

export const assignmentParamsSchema = z.object({ id: id('id') });
export const classParamsSchema = z.object({ classId: id('classId') });
export const studentParamsSchema = z.object({ userId: id('userId') });
export const signOffParamsSchema = z.object({ id: id('id') });

export const compareRowSchema = z.object({
  attemptId: z.number().int(),
  studentId: z.number().int(),
  studentName: z.string(),
  submittedAt: z.string().nullable(),
  /** Submitted attempts of this student for the assignment. */
  attemptCount: z.number().int(),
  timeToDiagnosisMs: z.number().int().nullable(),
  /** The fault named was the actual one. */
  correct: z.boolean().nullable(),
  faultGiven: z.string().nullable(),
  grade: z.number().nullable(),
  verified: z.boolean(),
  mistakes: z.number().int(),
  mistakeKinds: z.array(z.string()),
  /** The fault(s) of the scenario version the student drew (instructors only; null for a student). */
  drawnFault: z.string().nullable(),
  /** The attempt was flagged: an instructor's injection not logged by the bench as the server sent it. */
  flagged: z.boolean(),
  /** How many of the scenario's hints the student opened (null: graded before hints were logged). */
  hintsOpened: z.number().int().nullable(),
});
export type CompareRow = z.infer<typeof compareRowSchema>;

export const accuracyByFaultSchema = z.object({ fault: z.string(), label: z.string(), attempts: z.number().int(), named: z.number().int() });
export const accuracyByTestSchema = z.object({ test: z.enum(COMPETENCIES), label: z.string(), verdicts: z.number().int(), right: z.number().int() });

export const distributionSchema = z.object({
  /** Every counted student's time to diagnosis, ascending, without names. */
  timesMs: z.array(z.number().int()),
  /** The viewer's own time (students), or null. */
  mineMs: z.number().int().nullable(),
  /** 1 is the fastest; ties share a place. */
  myPlace: z.number().int().nullable(),
  medianMs: z.number().nullable(),
});
export type Distribution = z.infer<typeof distributionSchema>;

export const compareHeaderSchema = z.object({
  assignmentId: z.number().int(),
  title: z.string(),
  classId: z.number().int(),
  className: z.string(),
  scenarioTitle: z.string(),
  enrolled: z.number().int(),
  submitted: z.number().int(),
});

/** Results of one drawn fault (an assignment with a fault pool has several). */
export const drawnGroupSchema = z.object({
  drawnFault: z.string(),
  scenarioVersionId: z.number().int(),
  scenarioTitle: z.string(),
  students: z.number().int(),
  correct: z.number().int(),
  medianMs: z.number().nullable(),
});

export const instructorCompareSchema = z.object({
  viewer: z.literal('instructor'),
  assignment: compareHeaderSchema,
  rows: z.array(compareRowSchema),
  /** The results grouped by the fault each student drew. */
  groups: z.array(drawnGroupSchema),
  distribution: distributionSchema,
  accuracyByFault: z.array(accuracyByFaultSchema),
  accuracyByTest: z.array(accuracyByTestSchema),
});
export type InstructorCompare = z.infer<typeof instructorCompareSchema>;

export const studentCompareSchema = z.object({
  viewer: z.literal('student'),
  assignment: compareHeaderSchema,
  /** The student's own counted attempt, or null before they submit. */
  mine: compareRowSchema.nullable(),
  distribution: distributionSchema,
});
export type StudentCompare = z.infer<typeof studentCompareSchema>;

export const compareResponseSchema = z.discriminatedUnion('viewer', [instructorCompareSchema, studentCompareSchema]);
export type CompareResponse = z.infer<typeof compareResponseSchema>;

// ---------------------------------------------------------------------------
// Sign-offs

export const createSignOffSchema = z.strictObject({
  attemptId: idField('attemptId'),
  competency: competencySchema,
  note: z.string().trim().max(500, 'note must be at most 500 characters').default(''),
});
export type CreateSignOffInput = z.input<typeof createSignOffSchema>;

export const signOffSchema = z.object({
  id: z.number().int(),
  userId: z.number().int(),
  competency: z.enum(COMPETENCIES),
  attemptId: z.number().int().nullable(),
  signedById: z.number().int().nullable(),
  signedByName: z.string().nullable(),
  note: z.string(),
  createdAt: z.string(),
});
export type SignOff = z.infer<typeof signOffSchema>;

export const competencyProgressSchema = z.object({
  competency: z.enum(COMPETENCIES),
  label: z.string(),
  signOff: signOffSchema.nullable(),
  /** Graded attempts whose scenario expected this test. */
  gradedAttempts: z.number().int(),
  /** Of their verdicts on this test, how many were right. */
  verdictsRight: z.number().int(),
  verdicts: z.number().int(),
  /** Graded attempts an instructor could sign this competency off from, newest first, with whether the verdict on this test was right (null: none given). */
  evidence: z.array(
    z.object({ attemptId: z.number().int(), scenarioTitle: z.string(), grade: z.number().nullable(), submittedAt: z.string().nullable(), verdictOk: z.boolean().nullable() }),
  ),
});
export type CompetencyProgress = z.infer<typeof competencyProgressSchema>;

export const progressResponseSchema = z.object({
  student: z.object({ id: z.number().int(), name: z.string() }),
  competencies: z.array(competencyProgressSchema),
  /** Every graded attempt, oldest first: the trend of grades and diagnosis times. */
  attempts: z.array(
    z.object({
      attemptId: z.number().int(),
      scenarioTitle: z.string(),
      grade: z.number(),
      submittedAt: z.string().nullable(),
      timeToDiagnosisMs: z.number().int().nullable(),
      faultCorrect: z.boolean().nullable(),
    }),
  ),
});
export type ProgressResponse = z.infer<typeof progressResponseSchema>;

/** Columns of the CSV exports, in order. */
/**
 * The grades export: one row per submitted attempt, in words (no codes), the
 * row that counts for each student marked (their latest submitted attempt).
 */
export const GRADES_CSV_COLUMNS = [
  'Attempt',
  'Student',
  'E-mail',
  'Assignment',
  'Fault drawn',
  'Submitted at',
  'Counts for the grade',
  'Grade',
  'Readings verified',
  'Fault named',
  'Fault correct',
  'Time to diagnosis (s)',
  'Mistakes',
  'Mistakes made',
] as const;
export const SIGN_OFFS_CSV_COLUMNS = ['Student', 'E-mail', 'Competency', 'Attempt', 'Signed by', 'Signed at', 'Note'] as const;
