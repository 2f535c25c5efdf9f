/** Classes' queries: summaries, students, and the transactions that create a class and enrol a student. */
import { and, asc, eq, inArray, sql } from 'drizzle-orm';
import type { SessionUser } from '../../shared/api/auth.ts';
import type { ClassDetail, ClassStudent, ClassSummary, CreateClassInput, AddStudentInput } from '../../shared/api/classes.ts';
import { assertCanManageClass } from '../accounts/access.ts';
import type { Db, DbOrTx } from '../db/client.ts';
import { assignments, classes, classInstructors, enrollments, users } from '../db/schema.ts';
import { badRequest, conflict, HttpError, notFound } from '../http/errors.ts';

/** The answer for an e-mail that is not a student's: it names no role, so enrolling tells nobody what an address is. */
export const NOT_A_STUDENT = 'This e-mail cannot be enrolled as a student; ask your program admin';

/** Summaries of the given classes (or, with null, of every class). */
export async function classSummaries(db: DbOrTx, classIds: number[] | null): Promise<ClassSummary[]> {
  if (classIds && classIds.length === 0) return [];
  const rows = await db
    .select({ id: classes.id, name: classes.name, term: classes.term, archived: classes.archived })
    .from(classes)
    .where(classIds ? inArray(classes.id, classIds) : undefined)
    .orderBy(asc(classes.archived), asc(classes.name), asc(classes.id));
  const ids = rows.map((r) => r.id);
  if (!ids.length) return [];
  const teachers = await db
    .select({ classId: classInstructors.classId, id: users.id, name: users.name })
    .from(classInstructors)
    .innerJoin(users, eq(users.id, classInstructors.userId))
    .where(inArray(classInstructors.classId, ids))
    .orderBy(asc(users.name));
  const students = await db
    .select({ classId: enrollments.classId, n: sql<number>`count(*)::int` })
    .from(enrollments)
    .where(inArray(enrollments.classId, ids))
    .groupBy(enrollments.classId);
  const work = await db
    .select({ classId: assignments.classId, n: sql<number>`count(*)::int` })
    .from(assignments)
    .where(inArray(assignments.classId, ids))
    .groupBy(assignments.classId);
  return rows.map((r) => ({
    ...r,
    instructors: teachers.filter((t) => t.classId === r.id).map((t) => ({ id: t.id, name: t.name })),
    studentCount: students.find((s) => s.classId === r.id)?.n ?? 0,
    assignmentCount: work.find((w) => w.classId === r.id)?.n ?? 0,
  }));
}

export async function classIdsFor(db: DbOrTx, user: Pick<SessionUser, 'id' | 'role'>): Promise<number[] | null> {
  if (user.role === 'admin') return null;
  if (user.role === 'instructor') {
    const rows = await db.select({ id: classInstructors.classId }).from(classInstructors).where(eq(classInstructors.userId, user.id));
    return rows.map((r) => r.id);
  }
  const rows = await db.select({ id: enrollments.classId }).from(enrollments).where(eq(enrollments.userId, user.id));
  return rows.map((r) => r.id);
}

export async function classStudents(db: DbOrTx, classId: number): Promise<ClassStudent[]> {
  const rows = await db
    .select({ id: users.id, name: users.name, email: users.email, passwordHash: users.passwordHash, enrolledAt: enrollments.createdAt })
    .from(enrollments)
    .innerJoin(users, eq(users.id, enrollments.userId))
    .where(eq(enrollments.classId, classId))
    .orderBy(asc(users.name));
  return rows.map((r) => ({ id: r.id, name: r.name, email: r.email, hasPassword: r.passwordHash !== null, enrolledAt: r.enrolledAt.toISOString() }));
}

export async function classDetail(db: DbOrTx, classId: number): Promise<ClassDetail> {
  const [summary] = await classSummaries(db, [classId]);
  if (!summary) throw notFound('No such class');
  return { ...summary, students: await classStudents(db, classId) };
}

/** Creates a class taught by the given instructors (each must be an instructor or admin). */
export async function createClass(db: Db, input: Pick<CreateClassInput, 'name' | 'term'>, instructorIds: number[]): Promise<number> {
  return db.transaction(async (tx) => {
    if (instructorIds.length) {
      const found = await tx.select({ id: users.id, role: users.role }).from(users).where(inArray(users.id, instructorIds));
      const bad = instructorIds.findIndex((id) => found.find((f) => f.id === id)?.role !== 'instructor' && found.find((f) => f.id === id)?.role !== 'admin');
      if (bad >= 0) throw badRequest(`instructorIds.${bad}: user ${instructorIds[bad]} is not an instructor`, { field: `instructorIds.${bad}` });
    }
    const [row] = await tx.insert(classes).values({ name: input.name, term: input.term }).returning({ id: classes.id });
    if (!row) throw new HttpError(500, 'Class was not created');
    if (instructorIds.length) await tx.insert(classInstructors).values(instructorIds.map((userId) => ({ classId: row.id, userId })));
    return row.id;
  });
}

/**
 * Enrols one student by e-mail: an existing student account, or a new one
 * (created says which). An e-mail of a staff account is refused without
 * saying whose it is or what role it has.
 */
export async function enrolStudent(db: Db, user: SessionUser, classId: number, input: AddStudentInput) {
  return db.transaction(async (tx) => {
    const cls = await assertCanManageClass(tx, user, classId);
    const [existing] = await tx
      .select({ id: users.id, name: users.name, email: users.email, role: users.role })
      .from(users)
      .where(sql`lower(${users.email}) = ${input.email}`);
    let student = existing;
    let created = false;
    if (existing) {
      if (existing.role !== 'student') throw conflict(NOT_A_STUDENT, 'email');
    } else {
      if (!input.name) throw badRequest('name: Give the new student’s name', { field: 'name' });
      [student] = await tx
        .insert(users)
        .values({ email: input.email, name: input.name, role: 'student' })
        .returning({ id: users.id, name: users.name, email: users.email, role: users.role });
      created = true;
    }
    if (!student) throw new HttpError(500, 'Student was not created');
    const inserted = await tx.insert(enrollments).values({ classId, userId: student.id }).onConflictDoNothing().returning({ userId: enrollments.userId });
    if (!inserted.length) throw conflict(`${student.email} is already in this class`, 'email');
    return { student, created, cls };
  });
}

/** Takes a student out of a class; false when they were not in it. */
export async function removeStudent(db: DbOrTx, classId: number, userId: number): Promise<boolean> {
  const removed = await db
    .delete(enrollments)
    .where(and(eq(enrollments.classId, classId), eq(enrollments.userId, userId)))
    .returning({ userId: enrollments.userId });
  return removed.length > 0;
}
