/**
 * Ownership checks: the role checks live in the route table (http/guards.ts); these
 * say whether this user may touch this class, assignment or attempt. Each
 * throws 404 when the thing does not exist and 403 when it is not theirs.
 * Admins pass every instructor check.
 */
import { and, eq, gt, inArray, sql } from 'drizzle-orm';
import type { SessionUser } from '../../shared/api/auth.ts';
import type { DbOrTx } from '../db/client.ts';
import { assignmentPool, assignments, attempts, classes, classInstructors, enrollments, scenarios, scenarioVersions } from '../db/schema.ts';
import { forbidden, HttpError, notFound } from '../http/errors.ts';
import { ltiDeepLinkRequests } from '../lti/tables.ts';

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

/**
 * The assignment, when the user teaches its class, or is enrolled in it
 * (students) and it has opened: before then a student learns nothing of it,
 * its title included.
 */
export async function requireAssignmentMember(db: DbOrTx, user: SessionUser, assignmentId: number, now = new Date()): Promise<AssignmentAccess & { teaches: boolean }> {
  const [row] = await db.select({ classId: assignments.classId, opensAt: assignments.opensAt }).from(assignments).where(eq(assignments.id, assignmentId));
  if (!row) throw notFound('No such assignment');
  if (await teachesClass(db, user, row.classId)) return { assignmentId, classId: row.classId, teaches: true };
  if (user.role === 'student') {
    const [enrolled] = await db
      .select({ userId: enrollments.userId })
      .from(enrollments)
      .where(and(eq(enrollments.classId, row.classId), eq(enrollments.userId, user.id)));
    if (enrolled && row.opensAt > now) throw forbidden('This assignment has not opened yet');
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
  /** The user teaches the class of the attempt's assignment (admins: every attempt). */
  teaches: boolean;
}

/**
 * The class whose instructors may see an attempt: its assignment's class.
 * A practice attempt belongs to no class, whatever classes its student is
 * in: it is the student's own (and an admin's to see), never an instructor's.
 */
export async function classesOfAttempt(db: DbOrTx, attempt: { ownerId: number; assignmentId: number | null }): Promise<number[]> {
  if (attempt.assignmentId === null) return [];
  const [row] = await db.select({ classId: assignments.classId }).from(assignments).where(eq(assignments.id, attempt.assignmentId));
  return row ? [row.classId] : [];
}

/** Whether the user teaches the class this attempt was done for. */
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
  return attemptReaderAccess(db, user, { attemptId, ...row });
}

/** The reader check on an attempt row already read (saves reading it twice). */
export async function attemptReaderAccess(
  db: DbOrTx,
  user: SessionUser,
  row: { attemptId: number; ownerId: number; assignmentId: number | null; status: string },
): Promise<AttemptAccess> {
  const isOwner = row.ownerId === user.id;
  const teaches = !isOwner && (await teachesAttempt(db, user, row));
  if (!isOwner && !teaches) throw forbidden('This attempt is not yours');
  return { attemptId: row.attemptId, ownerId: row.ownerId, assignmentId: row.assignmentId, status: row.status, isOwner, teaches };
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

// ---------------------------------------------------------------------------
// Classes, scenarios and assignments as the library and class pages use them.
// Each answers 404 when the thing does not exist and 403 when it exists but is
// not the user's; it returns the row it checked so the caller need not load it again.
//
// - an instructor sees the classes they teach; a student the classes they are enrolled in;
// - an instructor sees shared scenarios and their own private ones (another's private
//   scenario answers 404) and edits their own; others' shared ones are duplicated to adapt;
// - a student reads no scenario document: they practise published shared scenarios and
//   run the assignments of their classes that have opened.

type Who = SessionUser;

export interface ClassRow {
  id: number;
  name: string;
  term: string;
  archived: boolean;
}

async function loadClass(db: DbOrTx, classId: number): Promise<ClassRow> {
  const [row] = await db.select({ id: classes.id, name: classes.name, term: classes.term, archived: classes.archived }).from(classes).where(eq(classes.id, classId));
  if (!row) throw notFound('No such class');
  return row;
}

export async function isEnrolled(db: DbOrTx, userId: number, classId: number): Promise<boolean> {
  const [row] = await db
    .select({ one: sql<number>`1` })
    .from(enrollments)
    .where(and(eq(enrollments.classId, classId), eq(enrollments.userId, userId)));
  return !!row;
}

/** Admin, an instructor of the class, or a student enrolled in it. */
export async function assertCanSeeClass(db: DbOrTx, user: Who, classId: number): Promise<ClassRow> {
  const row = await loadClass(db, classId);
  if (user.role === 'admin') return row;
  if (user.role === 'instructor' && (await teachesClass(db, user, classId))) return row;
  if (user.role === 'student' && (await isEnrolled(db, user.id, classId))) return row;
  throw forbidden('This class is not yours to see');
}

/** Admin or an instructor of the class: roster, assignments, results. */
export async function assertCanManageClass(db: DbOrTx, user: Who, classId: number): Promise<ClassRow> {
  const row = await loadClass(db, classId);
  if (user.role === 'admin') return row;
  if (user.role === 'instructor' && (await teachesClass(db, user, classId))) return row;
  throw forbidden('Only the class’s instructors can change it');
}

export interface ScenarioRow {
  id: number;
  slug: string;
  ownerId: number | null;
  visibility: string;
  publishedVersionId: number | null;
  latestVersion: number;
  archived: boolean;
}

const scenarioColumns = {
  id: scenarios.id,
  slug: scenarios.slug,
  ownerId: scenarios.ownerId,
  visibility: scenarios.visibility,
  publishedVersionId: scenarios.publishedVersionId,
  latestVersion: scenarios.latestVersion,
  archived: scenarios.archived,
};

async function loadScenario(db: DbOrTx, scenarioId: number, forUpdate = false): Promise<ScenarioRow> {
  const q = db.select(scenarioColumns).from(scenarios).where(eq(scenarios.id, scenarioId));
  const [row] = forUpdate ? await q.for('update') : await q;
  if (!row) throw notFound('No such scenario');
  return row;
}

/** Whether the user may read this scenario's document (faults included). Students never may. */
export function canSeeScenario(user: Pick<SessionUser, 'id' | 'role'>, row: Pick<ScenarioRow, 'ownerId' | 'visibility'>): boolean {
  if (user.role === 'admin') return true;
  if (user.role !== 'instructor') return false;
  return row.visibility === 'shared' || row.ownerId === user.id;
}

export function canEditScenario(user: Pick<SessionUser, 'id' | 'role'>, row: Pick<ScenarioRow, 'ownerId'>): boolean {
  return user.role === 'admin' || (user.role === 'instructor' && row.ownerId === user.id);
}

/**
 * Admin, the owner, or any instructor when the scenario is shared. Another
 * instructor's private scenario answers 404, as if it did not exist.
 */
export async function assertCanSeeScenario(db: DbOrTx, user: Who, scenarioId: number): Promise<ScenarioRow> {
  const row = await loadScenario(db, scenarioId);
  if (user.role === 'student') throw forbidden('Students cannot read scenario documents');
  if (!canSeeScenario(user, row)) throw notFound('No such scenario');
  return row;
}

/** Admin or the owner. Pass a transaction to lock the row (versions are numbered under the lock). */
export async function assertCanEditScenario(db: DbOrTx, user: Who, scenarioId: number, opts: { lock?: boolean } = {}): Promise<ScenarioRow> {
  const row = await loadScenario(db, scenarioId, opts.lock);
  if (user.role === 'student') throw forbidden('Students cannot change scenarios');
  if (!canSeeScenario(user, row)) throw notFound('No such scenario');
  if (!canEditScenario(user, row)) throw forbidden('Only the scenario’s owner can change it; duplicate it to adapt it');
  return row;
}

/** A version of a scenario the user can see; 404 when the version belongs to another scenario. */
export async function assertCanSeeScenarioVersion(
  db: DbOrTx,
  user: Who,
  scenarioId: number,
  versionId: number,
): Promise<{ scenario: ScenarioRow; version: { id: number; version: number; definition: unknown; title: string } }> {
  const scenario = await assertCanSeeScenario(db, user, scenarioId);
  const [version] = await db
    .select({ id: scenarioVersions.id, version: scenarioVersions.version, definition: scenarioVersions.definition, title: scenarioVersions.title })
    .from(scenarioVersions)
    .where(and(eq(scenarioVersions.id, versionId), eq(scenarioVersions.scenarioId, scenarioId)));
  if (!version) throw notFound('No such version of this scenario');
  return { scenario, version };
}

/**
 * The scenario versions a student may not practise now: those an open or
 * upcoming assignment of one of their classes runs (its own version or one
 * of its pool), unless its instructor allows practice for it. Practising one
 * would hand over that assignment's answer key.
 */
export async function versionsWithheldFromPractice(db: DbOrTx, userId: number, now = new Date()): Promise<Set<number>> {
  const open = and(eq(enrollments.userId, userId), gt(assignments.dueAt, now), eq(assignments.allowPractice, false));
  const [own, pooled] = await Promise.all([
    db
      .select({ versionId: assignments.scenarioVersionId })
      .from(assignments)
      .innerJoin(enrollments, eq(enrollments.classId, assignments.classId))
      .where(open),
    db
      .select({ versionId: assignmentPool.scenarioVersionId })
      .from(assignmentPool)
      .innerJoin(assignments, eq(assignments.id, assignmentPool.assignmentId))
      .innerJoin(enrollments, eq(enrollments.classId, assignments.classId))
      .where(open),
  ]);
  return new Set([...own, ...pooled].map((r) => r.versionId));
}

/**
 * A published, shared scenario anyone signed in may practise, unless its
 * published version is withheld from this student (versionsWithheldFromPractice).
 * Returns the published version's id (what a practice attempt runs).
 */
export async function assertCanPractiseScenario(db: DbOrTx, user: Who, scenarioId: number): Promise<{ scenarioId: number; scenarioVersionId: number }> {
  const row = await loadScenario(db, scenarioId);
  const visible = row.visibility === 'shared' || user.role === 'admin' || row.ownerId === user.id;
  if (!visible || row.archived) throw notFound('No such scenario');
  if (row.publishedVersionId === null) throw new HttpError(409, 'This scenario has no published version yet', { field: 'scenarioId' });
  if ((await versionsWithheldFromPractice(db, user.id)).has(row.publishedVersionId)) {
    throw new HttpError(409, 'scenarioId: this scenario is set in an open or upcoming assignment of your class; it can be practised once that assignment closes', { field: 'scenarioId' });
  }
  return { scenarioId: row.id, scenarioVersionId: row.publishedVersionId };
}

export interface AssignmentRow {
  id: number;
  classId: number;
  scenarioVersionId: number;
  title: string;
  opensAt: Date;
  dueAt: Date;
  attemptsAllowed: number;
  showCurveAfter: boolean;
  showFeedbackAfter: boolean;
  poolSeed: number;
}

async function loadAssignment(db: DbOrTx, assignmentId: number): Promise<AssignmentRow> {
  const [row] = await db
    .select({
      id: assignments.id,
      classId: assignments.classId,
      scenarioVersionId: assignments.scenarioVersionId,
      title: assignments.title,
      opensAt: assignments.opensAt,
      dueAt: assignments.dueAt,
      attemptsAllowed: assignments.attemptsAllowed,
      showCurveAfter: assignments.showCurveAfter,
      showFeedbackAfter: assignments.showFeedbackAfter,
      poolSeed: assignments.poolSeed,
    })
    .from(assignments)
    .where(eq(assignments.id, assignmentId));
  if (!row) throw notFound('No such assignment');
  return row;
}

/** Admin, an instructor of the assignment's class, or an enrolled student once it has opened. */
export async function assertCanSeeAssignment(db: DbOrTx, user: Who, assignmentId: number, now = new Date()): Promise<AssignmentRow> {
  const row = await loadAssignment(db, assignmentId);
  await assertCanSeeClass(db, user, row.classId);
  if (user.role === 'student' && row.opensAt > now) throw forbidden('This assignment has not opened yet');
  return row;
}

/** Admin or an instructor of the assignment's class. */
export async function assertCanManageAssignment(db: DbOrTx, user: Who, assignmentId: number): Promise<AssignmentRow> {
  const row = await loadAssignment(db, assignmentId);
  await assertCanManageClass(db, user, row.classId);
  return row;
}

/**
 * A student may start an attempt on this assignment now: enrolled, open, not
 * past due, attempts left (`attemptsUsed` counted by the caller, who owns attempts;
 * `terms` turns the assignment's due date and attempts into the student's own
 * when an instructor has extended them).
 */
export async function assertCanStartAssignment(
  db: DbOrTx,
  user: Who,
  assignmentId: number,
  attemptsUsed: number,
  now = new Date(),
  terms: (row: AssignmentRow) => Promise<{ dueAt: Date; attemptsAllowed: number }> = async (row) => row,
): Promise<AssignmentRow> {
  const row = await loadAssignment(db, assignmentId);
  if (user.role !== 'student' || !(await isEnrolled(db, user.id, row.classId))) throw forbidden('This assignment is not yours');
  if (row.opensAt > now) throw new HttpError(409, 'This assignment has not opened yet', { field: 'assignmentId' });
  const own = await terms(row);
  if (own.dueAt < now) throw new HttpError(409, 'This assignment is past its due date', { field: 'assignmentId' });
  if (attemptsUsed >= own.attemptsAllowed) throw new HttpError(409, `All ${own.attemptsAllowed} attempts have been used`, { field: 'assignmentId' });
  return row;
}

/** Whether the user teaches a class the student is enrolled in (admins: always). */
export async function teachesStudent(db: DbOrTx, user: SessionUser, studentId: number): Promise<boolean> {
  if (user.role === 'admin') return true;
  if (user.role !== 'instructor') return false;
  const [row] = await db
    .select({ classId: enrollments.classId })
    .from(enrollments)
    .innerJoin(classInstructors, eq(classInstructors.classId, enrollments.classId))
    .where(and(eq(enrollments.userId, studentId), eq(classInstructors.userId, user.id)))
    .limit(1);
  return row !== undefined;
}

/**
 * What of a student's work the reader may see: `null` for all of it (the
 * student, an admin), else the ids of the classes the instructor teaches,
 * whose assignments' attempts are all an instructor sees of a student: not
 * their practice, not other classes' work.
 */
export type StudentScope = { self: boolean; classIds: number[] | null };

/** The student themselves, an admin, or an instructor of one of their classes (who sees that class's work only). */
export async function requireStudentReader(db: DbOrTx, user: SessionUser, studentId: number): Promise<StudentScope> {
  if (user.id === studentId) return { self: true, classIds: null };
  if (user.role === 'admin') return { self: false, classIds: null };
  if (!(await teachesStudent(db, user, studentId))) throw forbidden('You do not teach this student');
  const rows = await db.select({ classId: classInstructors.classId }).from(classInstructors).where(eq(classInstructors.userId, user.id));
  return { self: false, classIds: rows.map((r) => r.classId) };
}

/** A sign-off is withdrawn by the instructor who made it, or by an admin. */
export function canWithdrawSignOff(user: SessionUser, signOff: { signedBy: number | null }): boolean {
  return user.role === 'admin' || (user.role === 'instructor' && signOff.signedBy === user.id);
}

/**
 * A deep-linking request from a learning platform (server/lti): only the
 * instructor whose launch made it may answer it; anyone else is told it does
 * not exist. Returns its class and platform.
 */
export async function requireDeepLinkOwner(db: DbOrTx, user: SessionUser, requestId: string): Promise<{ classId: number; platformId: number }> {
  const [row] = await db
    .select({ userId: ltiDeepLinkRequests.userId, classId: ltiDeepLinkRequests.classId, platformId: ltiDeepLinkRequests.platformId })
    .from(ltiDeepLinkRequests)
    .where(eq(ltiDeepLinkRequests.id, requestId));
  if (!row || row.userId !== user.id) throw notFound('No such request from your learning platform');
  return { classId: row.classId, platformId: row.platformId };
}
