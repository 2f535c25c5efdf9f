/** Payloads of the classes and roster API (/api/classes). */
import { z } from 'zod';
import { nameText } from '../names.ts';
import { emailSchema } from './auth.ts';
import { idField, idParam } from './ids.ts';
import { nameSchema } from './users.ts';

export const classIdParamsSchema = z.object({ id: idParam('id') });
export const classStudentParamsSchema = z.object({ id: idParam('id'), userId: idParam('userId') });

export const personSchema = z.object({ id: z.number().int(), name: z.string(), email: z.string() });
export type Person = z.infer<typeof personSchema>;

export const classSummarySchema = z.object({
  id: z.number().int(),
  name: z.string(),
  term: z.string(),
  archived: z.boolean(),
  instructors: z.array(z.object({ id: z.number().int(), name: z.string() })),
  studentCount: z.number().int(),
  assignmentCount: z.number().int(),
});
export type ClassSummary = z.infer<typeof classSummarySchema>;
export const classListResponseSchema = z.object({ classes: z.array(classSummarySchema) });

export const classStudentSchema = personSchema.extend({ hasPassword: z.boolean(), enrolledAt: z.string() });
export type ClassStudent = z.infer<typeof classStudentSchema>;

export const classDetailSchema = classSummarySchema.extend({ students: z.array(classStudentSchema) });
export type ClassDetail = z.infer<typeof classDetailSchema>;

export const createClassSchema = z.strictObject({
  name: nameText('name', 2, 120),
  term: nameText('term', 0, 60).default(''),
  /** Admins name the instructors; an instructor creating a class teaches it. */
  instructorIds: z.array(idField('instructorId')).max(10, 'at most 10 instructors').optional(),
});
export type CreateClassInput = z.input<typeof createClassSchema>;

export const addStudentSchema = z.strictObject({
  email: emailSchema,
  /** Needed only when the e-mail is new: the student is created and invited. */
  name: nameSchema.optional(),
});
export type AddStudentInput = z.infer<typeof addStudentSchema>;

export const addStudentResponseSchema = z.object({ student: classStudentSchema, created: z.boolean(), invited: z.boolean() });

/** One line of a roster file as the preview sees it. Line numbers count the header as line 1. */
export const rosterRowSchema = z.object({
  line: z.number().int(),
  name: z.string(),
  email: z.string(),
  /** new: an account is made and invited; existing: a student account is enrolled; enrolled: already in the class; error: see message. */
  status: z.enum(['new', 'existing', 'enrolled', 'error']),
  message: z.string().optional(),
});
export type RosterRow = z.infer<typeof rosterRowSchema>;

export const rosterPreviewSchema = z.object({
  fileName: z.string(),
  rows: z.array(rosterRowSchema),
  errorCount: z.number().int(),
  newCount: z.number().int(),
  existingCount: z.number().int(),
  alreadyEnrolledCount: z.number().int(),
});
export type RosterPreview = z.infer<typeof rosterPreviewSchema>;

export const rosterCommitResponseSchema = z.object({
  importId: z.number().int(),
  created: z.number().int(),
  enrolled: z.number().int(),
  invited: z.number().int(),
});
export type RosterCommitResponse = z.infer<typeof rosterCommitResponseSchema>;

/** The largest roster file accepted. */
export const ROSTER_MAX_BYTES = 256 * 1024;
export const ROSTER_MAX_ROWS = 500;
