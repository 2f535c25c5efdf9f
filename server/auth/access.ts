/**
 * Ownership checks: the role checks live in the route table (guard.ts); these
 * say whether this user may touch this class, assignment or attempt. Each
 * throws 404 when the thing does not exist and 403 when it is not theirs.
 * Admins pass every instructor check.
 */
import { and, eq, inArray } from 'drizzle-orm';
import type { SessionUser } from '../../shared/api/auth.ts';
import type { DbOrTx } from '../db/client.ts';
import { assignments, attempts, classInstructors, enrollments } from '../db/schema.ts';
import { forbidden, notFound } from '../http/errors.ts';

/** Whether the user teaches the class (admins teach every class). */
export async function teachesClass(db: DbOrTx, user: SessionUser, classId: number): Promise<boolean> {
  if (user.role === 'admin') return true;
  if (user.role !== 'instructor') return false;
  const [row] = await db
    .select({ classId: classInstructors.classId })
    .from(classInstructors)
    .where(and(eq(classInstructors.classId, classId), eq(classInstructors.userId, user.id)));
  return row !== undefined;
}

export async function requireClassInstructor(db: DbOrTx, user: SessionUser, classId: number): Promise<void> {
  if (!(await teachesClass(db, user, classId))) throw forbidden('You do not teach this class');
}

export interface AssignmentAccess {
  assignmentId: number;
  classId: number;
}

/** The assignment, when the user teaches its class. */
export async function requireAssignmentInstructor(db: DbOrTx, user: SessionUser, assignmentId: number): Promise<AssignmentAccess> {
  const [row] = await db.select({ classId: assignments.classId }).from(assignments).where(eq(assignments.id, assignmentId));
  if (!row) throw notFound('No such assignment');
  await requireClassInstructor(db, user, row.classId);
  return { assignmentId, classId: row.classId };
}

/** The assignment, when the user is enrolled in its class (students) or teaches it. */
export async function requireAssignmentMember(db: DbOrTx, user: SessionUser, assignmentId: number): Promise<AssignmentAccess & { teaches: boolean }> {
  const [row] = await db.select({ classId: assignments.classId }).from(assignments).where(eq(assignments.id, assignmentId));
  if (!row) throw notFound('No such assignment');
  if (await teachesClass(db, user, row.classId)) return { assignmentId, classId: row.classId, teaches: true };
  if (user.role === 'student') {
    const [enrolled] = await db
      .select({ userId: enrollments.userId })
      .from(enrollments)
      .where(and(eq(enrollments.classId, row.classId), eq(enrollments.userId, user.id)));
    if (enrolled) return { assignmentId, classId: row.classId, teaches: false };
  }
  throw forbidden('You are not in the class of this assignment');
}

export interface AttemptAccess {
  attemptId: number;
  ownerId: number;
  assignmentId: number | null;
  status: string;
  /** The user is the attempt's student. */
  isOwner: boolean;
  /** The user teaches the attempt's class (or a class of its student, for practice). */
  teaches: boolean;
}

/**
 * The classes whose instructors may see an attempt: the assignment's class,
 * or for practice attempts every class the student is enrolled in.
 */
export async function classesOfAttempt(db: DbOrTx, attempt: { ownerId: number; assignmentId: number | null }): Promise<number[]> {
  if (attempt.assignmentId !== null) {
    const [row] = await db.select({ classId: assignments.classId }).from(assignments).where(eq(assignments.id, attempt.assignmentId));
    return row ? [row.classId] : [];
  }
  const rows = await db.select({ classId: enrollments.classId }).from(enrollments).where(eq(enrollments.userId, attempt.ownerId));
  return rows.map((r) => r.classId);
}

/** Whether the user teaches the student's class for this attempt. */
async function teachesAttempt(db: DbOrTx, user: SessionUser, attempt: { ownerId: number; assignmentId: number | null }): Promise<boolean> {
  if (user.role === 'admin') return true;
  if (user.role !== 'instructor') return false;
  const classIds = await classesOfAttempt(db, attempt);
  if (classIds.length === 0) return false;
  const [row] = await db
    .select({ classId: classInstructors.classId })
    .from(classInstructors)
    .where(and(inArray(classInstructors.classId, classIds), eq(classInstructors.userId, user.id)));
  return row !== undefined;
}

/** The attempt, when the user is its student or teaches its class. */
export async function requireAttemptReader(db: DbOrTx, user: SessionUser, attemptId: number): Promise<AttemptAccess> {
  const [row] = await db
    .select({ ownerId: attempts.userId, assignmentId: attempts.assignmentId, status: attempts.status })
    .from(attempts)
    .where(eq(attempts.id, attemptId));
  if (!row) throw notFound('No such attempt');
  const isOwner = row.ownerId === user.id;
  const teaches = !isOwner && (await teachesAttempt(db, user, row));
  if (!isOwner && !teaches) throw forbidden('This attempt is not yours');
  return { attemptId, ownerId: row.ownerId, assignmentId: row.assignmentId, status: row.status, isOwner, teaches };
}

/** The attempt, when the user is its student. */
export async function requireAttemptOwner(db: DbOrTx, user: SessionUser, attemptId: number): Promise<AttemptAccess> {
  const access = await requireAttemptReader(db, user, attemptId);
  if (!access.isOwner) throw forbidden('Only the student of this attempt can do this');
  return access;
}

/** The attempt, when the user teaches its class. */
export async function requireAttemptInstructor(db: DbOrTx, user: SessionUser, attemptId: number): Promise<AttemptAccess> {
  const access = await requireAttemptReader(db, user, attemptId);
  if (!access.teaches) throw forbidden('Only an instructor of this class can do this');
  return access;
}
