/**
 * Competency sign-offs, the domain's part: a student's progress, signing off
 * and withdrawing, and the class's export.
 */
import { and, asc, desc, eq, inArray, sql } from 'drizzle-orm';
import { alias } from 'drizzle-orm/pg-core';
import type { SessionUser } from '../../shared/api/auth.ts';
import { SIGN_OFFS_CSV_COLUMNS, type CompetencyProgress, type ProgressResponse, type SignOff } from '../../shared/api/compare.ts';
import { COMPETENCIES, COMPETENCY_LABELS, type Competency } from '../../shared/competencies.ts';
import type { StudentScope } from '../accounts/access.ts';
import type { DbOrTx } from '../db/client.ts';
import { assignments, attempts, classInstructors, enrollments, scenarioVersions, signOffs, users } from '../db/schema.ts';
import { badRequest, conflict, notFound } from '../http/errors.ts';
import { readResult, toCsv } from './submitted-attempts.ts';
import { hiddenFor } from './result-views.ts';

const signer = alias(users, 'signer');

const signOffColumns = {
  id: signOffs.id,
  userId: signOffs.userId,
  competency: signOffs.competency,
  attemptId: signOffs.attemptId,
  signedById: signOffs.signedBy,
  signedByName: signer.name,
  note: signOffs.note,
  createdAt: signOffs.createdAt,
};

type SignOffRow = { id: number; userId: number; competency: string; attemptId: number | null; signedById: number | null; signedByName: string | null; note: string; createdAt: Date };

const isCompetency = (c: string): c is Competency => (COMPETENCIES as readonly string[]).includes(c);

function toSignOff(r: SignOffRow): SignOff | null {
  if (!isCompetency(r.competency)) return null;
  return { ...r, competency: r.competency, createdAt: r.createdAt.toISOString() };
}

function testsExpectedOf(definition: unknown): Competency[] {
  const list = (definition as { testsExpected?: unknown } | null)?.testsExpected;
  return Array.isArray(list) ? list.filter((x): x is Competency => typeof x === 'string' && isCompetency(x)) : [];
}

const isUniqueViolation = (err: unknown) => (err as { code?: string }).code === '23505' || (err as { cause?: { code?: string } }).cause?.code === '23505';

/** Whether the student's verdict on a test was right; null when they gave none (the test was not run). */
function verdictOn(result: ReturnType<typeof readResult>, test: string): boolean | null {
  const v = (result.verdicts ?? []).find((x) => x.test === test) as { ok: boolean; given?: boolean | null } | undefined;
  if (!v || v.given === null) return null;
  return v.ok;
}

/**
 * A student's progress as the viewer may see it. An instructor (`scope`
 * with class ids) sees as evidence only attempts of their classes'
 * assignments; every sign-off shows (the competency is the student's, and
 * signed once), but the attempt and note behind one made from another class's
 * work stay with that class. Read by the student themselves (`scope.self`),
 * it leaves out attempts whose results are still hidden (an assignment that
 * shows results when it closes): which tests were expected, and whether the
 * verdicts were right, are part of its answer key.
 */
export async function progressOf(db: DbOrTx, studentId: number, scope: StudentScope, viewerId: number): Promise<ProgressResponse> {
  const [student] = await db.select({ id: users.id, name: users.name }).from(users).where(eq(users.id, studentId));
  if (!student) throw notFound('No such student');
  const classIds = scope.classIds;
  const inScope = (classId: number | null) => classIds === null || (classId !== null && classIds.includes(classId));
  const signedRows = await db
    .select({ ...signOffColumns, attemptClassId: assignments.classId })
    .from(signOffs)
    .leftJoin(signer, eq(signer.id, signOffs.signedBy))
    .leftJoin(attempts, eq(attempts.id, signOffs.attemptId))
    .leftJoin(assignments, eq(assignments.id, attempts.assignmentId))
    .where(eq(signOffs.userId, studentId));
  const signed = signedRows.map(({ attemptClassId, ...r }) => (inScope(attemptClassId) || r.signedById === viewerId ? r : { ...r, attemptId: null, note: '' }));
  const ofClasses =
    classIds === null
      ? undefined
      : classIds.length
        ? inArray(attempts.assignmentId, db.select({ id: assignments.id }).from(assignments).where(inArray(assignments.classId, classIds)))
        : sql`false`;
  const graded = await db
    .select({
      attemptId: attempts.id,
      grade: attempts.grade,
      submittedAt: attempts.submittedAt,
      timeToDiagnosisMs: attempts.timeToDiagnosisMs,
      result: attempts.result,
      scenarioTitle: scenarioVersions.title,
      definition: scenarioVersions.definition,
      mode: attempts.mode,
      showFeedbackAfter: assignments.showFeedbackAfter,
      dueAt: assignments.dueAt,
    })
    .from(attempts)
    .innerJoin(scenarioVersions, eq(scenarioVersions.id, attempts.scenarioVersionId))
    .leftJoin(assignments, eq(assignments.id, attempts.assignmentId))
    .where(and(eq(attempts.userId, studentId), eq(attempts.status, 'submitted'), ofClasses))
    .orderBy(desc(attempts.submittedAt), desc(attempts.id))
    .then((rows) =>
      scope.self ? rows.filter((a) => !hiddenFor({ mode: a.mode === 'practice' ? 'practice' : 'assigned', showFeedbackAfter: a.showFeedbackAfter ?? true, dueAt: a.dueAt })) : rows,
    );
  const competencies: CompetencyProgress[] = COMPETENCIES.map((competency) => {
    const row = signed.find((s) => s.competency === competency);
    const expected = graded.filter((a) => a.grade !== null && testsExpectedOf(a.definition).includes(competency));
    let verdicts = 0;
    let verdictsRight = 0;
    for (const a of expected) {
      for (const v of readResult(a.result).verdicts ?? []) {
        if (v.test !== competency) continue;
        verdicts++;
        if (v.ok) verdictsRight++;
      }
    }
    return {
      competency,
      label: COMPETENCY_LABELS[competency],
      signOff: row ? toSignOff(row) : null,
      gradedAttempts: expected.length,
      verdicts,
      verdictsRight,
      evidence: expected.map((a) => ({
        attemptId: a.attemptId,
        scenarioTitle: a.scenarioTitle,
        grade: a.grade,
        submittedAt: a.submittedAt ? a.submittedAt.toISOString() : null,
        verdictOk: verdictOn(readResult(a.result), competency),
      })),
    };
  });
  const trend = graded
    .filter((a) => a.grade !== null)
    .reverse()
    .map((a) => ({
      attemptId: a.attemptId,
      scenarioTitle: a.scenarioTitle,
      grade: a.grade!,
      submittedAt: a.submittedAt ? a.submittedAt.toISOString() : null,
      timeToDiagnosisMs: a.timeToDiagnosisMs,
      faultCorrect: readResult(a.result).fault?.ok ?? null,
    }));
  return { student, competencies, attempts: trend };
}


/** Signs a competency off for a student from a graded attempt whose scenario expected it. */
export async function createSignOff(db: DbOrTx, signerId: number, studentId: number, input: { attemptId: number; competency: Competency; note: string }): Promise<SignOff | null> {
  const [attempt] = await db
    .select({ status: attempts.status, grade: attempts.grade, definition: scenarioVersions.definition })
    .from(attempts)
    .innerJoin(scenarioVersions, eq(scenarioVersions.id, attempts.scenarioVersionId))
    .where(eq(attempts.id, input.attemptId));
  if (!attempt || attempt.status !== 'submitted' || attempt.grade === null) {
    throw conflict('Sign off from a graded attempt: this one is not graded yet', 'attemptId');
  }
  if (!testsExpectedOf(attempt.definition).includes(input.competency)) {
    throw badRequest(`competency: the attempt's scenario did not expect the ${COMPETENCY_LABELS[input.competency].toLowerCase()}`, { field: 'competency' });
  }
  try {
    const [row] = await db
      .insert(signOffs)
      .values({ userId: studentId, competency: input.competency, attemptId: input.attemptId, signedBy: signerId, note: input.note })
      .returning({ id: signOffs.id });
    const [full] = await db.select(signOffColumns).from(signOffs).leftJoin(signer, eq(signer.id, signOffs.signedBy)).where(eq(signOffs.id, row!.id));
    return toSignOff(full!);
  } catch (err) {
    if (isUniqueViolation(err)) throw conflict('This competency is already signed off for the student', 'competency');
    throw err;
  }
}

/** Whose a sign-off is and who signed it; null when there is no such sign-off. */
export async function signOffHolder(db: DbOrTx, id: number): Promise<{ userId: number; signedBy: number | null } | null> {
  const [row] = await db.select({ userId: signOffs.userId, signedBy: signOffs.signedBy }).from(signOffs).where(eq(signOffs.id, id));
  return row ?? null;
}

export async function withdrawSignOff(db: DbOrTx, id: number): Promise<void> {
  await db.delete(signOffs).where(eq(signOffs.id, id));
}

/** The class's sign-offs as CSV, as the given instructor may see them. */
export async function classSignOffsCsv(db: DbOrTx, user: Pick<SessionUser, 'id' | 'role'>, classId: number): Promise<string> {
  const enrolled = await db.select({ userId: enrollments.userId }).from(enrollments).where(eq(enrollments.classId, classId));
  const ids = enrolled.map((e) => e.userId);
  const student = alias(users, 'student');
  const rows = ids.length
    ? await db
        .select({
          studentName: student.name,
          studentEmail: student.email,
          competency: signOffs.competency,
          attemptId: signOffs.attemptId,
          signedBy: signer.name,
          createdAt: signOffs.createdAt,
          note: signOffs.note,
          signedById: signOffs.signedBy,
          attemptClassId: assignments.classId,
        })
        .from(signOffs)
        .innerJoin(student, eq(student.id, signOffs.userId))
        .leftJoin(signer, eq(signer.id, signOffs.signedBy))
        .leftJoin(attempts, eq(attempts.id, signOffs.attemptId))
        .leftJoin(assignments, eq(assignments.id, attempts.assignmentId))
        .where(inArray(signOffs.userId, ids))
        .orderBy(asc(student.name), asc(signOffs.competency))
    : [];
  // As on the progress page: a sign-off made from another class's work shows without its attempt and note.
  const taught = user.role === 'admin' ? null : (await db.select({ classId: classInstructors.classId }).from(classInstructors).where(eq(classInstructors.userId, user.id))).map((c) => c.classId);
  const own = (r: (typeof rows)[number]) => taught === null || (r.attemptClassId !== null && taught.includes(r.attemptClassId)) || r.signedById === user.id;
  const csv = toCsv(
    SIGN_OFFS_CSV_COLUMNS,
    rows.map((r) => [
      r.studentName,
      r.studentEmail,
      isCompetency(r.competency) ? COMPETENCY_LABELS[r.competency] : 'Other competency',
      own(r) ? r.attemptId : null,
      r.signedBy,
      r.createdAt.toISOString(),
      own(r) ? r.note : '',
    ]),
  );
  return csv;
}
