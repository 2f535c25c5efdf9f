/** Assignments' queries and transactions: listing, creating with a fault pool, editing, students' progress, extensions, deleting. */
import { randomInt } from 'node:crypto';
import { and, asc, desc, eq, inArray, lte, sql } from 'drizzle-orm';
import type { SessionUser } from '../../shared/api/auth.ts';
import type { z } from 'zod';
import type { Assignment, AssignmentStudent, createAssignmentSchema, ExtensionInput, MyAssignment, UpdateAssignmentInput } from '../../shared/api/assignments.ts';
import { NO_FAULT_LABEL, restoreScenario, studentScenarioView, type ScenarioDefinition } from '../../shared/scenario.ts';
import { FAULT_TEXT } from '../../shared/fault-catalogue-text.ts';
import { assertCanManageAssignment, assertCanManageClass, assertCanSeeScenario, isEnrolled } from '../accounts/access.ts';
import type { Db, DbOrTx } from '../db/client.ts';
import { assignmentExtensions, assignmentPool, assignments, attempts, classes, enrollments, scenarioVersions, users } from '../db/schema.ts';
import { healthyParams } from '../grading/grade-run.ts';
import { badRequest, HttpError, notFound } from '../http/errors.ts';
import { extensionsOfAssignment, extensionsOfStudent, termsFor } from './terms.ts';

const assignmentColumns = {
  id: assignments.id,
  classId: assignments.classId,
  className: classes.name,
  title: assignments.title,
  scenarioId: scenarioVersions.scenarioId,
  scenarioVersionId: assignments.scenarioVersionId,
  scenarioVersion: scenarioVersions.version,
  opensAt: assignments.opensAt,
  dueAt: assignments.dueAt,
  attemptsAllowed: assignments.attemptsAllowed,
  showCurveAfter: assignments.showCurveAfter,
  showFeedbackAfter: assignments.showFeedbackAfter,
  allowPractice: assignments.allowPractice,
  createdAt: assignments.createdAt,
};

const faultLabelsOf = (def: ScenarioDefinition) => (def.faults.length ? [...new Set(def.faults.map((f) => FAULT_TEXT[f.kind].label))] : [NO_FAULT_LABEL]);

async function loadAssignments(db: DbOrTx, where: ReturnType<typeof eq>): Promise<Assignment[]> {
  const rows = await db
    .select(assignmentColumns)
    .from(assignments)
    .innerJoin(classes, eq(classes.id, assignments.classId))
    .innerJoin(scenarioVersions, eq(scenarioVersions.id, assignments.scenarioVersionId))
    .where(where)
    .orderBy(asc(assignments.dueAt), asc(assignments.id));
  const ids = rows.map((r) => r.id);
  const pools = ids.length
    ? await db
        .select({ assignmentId: assignmentPool.assignmentId, scenarioVersionId: assignmentPool.scenarioVersionId, title: scenarioVersions.title, definition: scenarioVersions.definition })
        .from(assignmentPool)
        .innerJoin(scenarioVersions, eq(scenarioVersions.id, assignmentPool.scenarioVersionId))
        .where(inArray(assignmentPool.assignmentId, ids))
        .orderBy(asc(assignmentPool.assignmentId), asc(assignmentPool.position))
    : [];
  return rows.map((r) => ({
    ...r,
    opensAt: r.opensAt.toISOString(),
    dueAt: r.dueAt.toISOString(),
    createdAt: r.createdAt.toISOString(),
    pool: pools
      .filter((p) => p.assignmentId === r.id)
      .map((p) => ({ scenarioVersionId: p.scenarioVersionId, title: p.title, faultLabels: faultLabelsOf(restoreScenario(p.definition)) })),
  }));
}

/** Two cars are one vehicle: the same name and kind and the same parameters apart from what faults work through. */
function sameVehicle(a: ScenarioDefinition, b: ScenarioDefinition): boolean {
  const spec = (d: ScenarioDefinition) => JSON.stringify({ name: d.vehicle.name, kind: d.vehicle.kind, params: { ...healthyParams(d.vehicle.params), label: '' } });
  return spec(a) === spec(b);
}

/**
 * The versions of a fault pool, the assignment's own first: each scenario
 * seen by the instructor, at its published version or the one named, all of
 * the first one's vehicle. A 400 names the entry at fault.
 */
async function resolvePool(tx: DbOrTx, user: Parameters<typeof assertCanSeeScenario>[1], baseVersionId: number, pool: readonly { scenarioId: number; scenarioVersionId?: number }[]): Promise<number[]> {
  if (pool.length === 0) return [baseVersionId];
  const [base] = await tx.select({ definition: scenarioVersions.definition, title: scenarioVersions.title }).from(scenarioVersions).where(eq(scenarioVersions.id, baseVersionId));
  const baseDef = restoreScenario(base!.definition);
  const out = [baseVersionId];
  for (const [i, entry] of pool.entries()) {
    const field = `pool.${i}`;
    const scenario = await assertCanSeeScenario(tx, user, entry.scenarioId).catch(() => {
      throw badRequest(`${field}.scenarioId: no scenario ${entry.scenarioId} you can assign`, { field: `${field}.scenarioId` });
    });
    const versionId = entry.scenarioVersionId ?? scenario.publishedVersionId;
    if (versionId === null) throw badRequest(`${field}.scenarioVersionId: that scenario has no published version; publish one or name the version`, { field: `${field}.scenarioVersionId` });
    const [version] = await tx
      .select({ id: scenarioVersions.id, title: scenarioVersions.title, definition: scenarioVersions.definition })
      .from(scenarioVersions)
      .where(and(eq(scenarioVersions.id, versionId), eq(scenarioVersions.scenarioId, scenario.id)));
    if (!version) throw badRequest(`${field}.scenarioVersionId: that version does not belong to that scenario`, { field: `${field}.scenarioVersionId` });
    const def = restoreScenario(version.definition);
    if (!sameVehicle(baseDef, def)) {
      throw badRequest(`${field}: "${version.title}" is on the ${def.vehicle.name}, not the ${baseDef.vehicle.name} of "${base!.title}": a pool is one vehicle with several fault sets`, { field });
    }
    if (!out.includes(version.id)) out.push(version.id);
  }
  return out;
}

/** A class's assignments. */
export function classAssignments(db: DbOrTx, classId: number): Promise<Assignment[]> {
  return loadAssignments(db, eq(assignments.classId, classId));
}

/** One assignment's record; null when there is none. */
export async function assignmentRecord(db: DbOrTx, id: number): Promise<Assignment | null> {
  const [row] = await loadAssignments(db, eq(assignments.id, id));
  return row ?? null;
}

/** A student's assignments: those of their classes that have opened, with attempts used. */
export async function myAssignments(db: DbOrTx, userId: number): Promise<MyAssignment[]> {
  const now = new Date();
  const rows = await db
    .select({ ...assignmentColumns, definition: scenarioVersions.definition })
    .from(assignments)
    .innerJoin(enrollments, and(eq(enrollments.classId, assignments.classId), eq(enrollments.userId, userId)))
    .innerJoin(classes, eq(classes.id, assignments.classId))
    .innerJoin(scenarioVersions, eq(scenarioVersions.id, assignments.scenarioVersionId))
    .where(and(lte(assignments.opensAt, now), eq(classes.archived, false)))
    .orderBy(asc(assignments.dueAt), asc(assignments.id));
  const ids = rows.map((r) => r.id);
  const used = ids.length
    ? await db
        .select({ assignmentId: attempts.assignmentId, n: sql<number>`count(*)::int` })
        .from(attempts)
        .where(and(eq(attempts.userId, userId), inArray(attempts.assignmentId, ids)))
        .groupBy(attempts.assignmentId)
    : [];
  const extensions = await extensionsOfStudent(db, userId, ids);
  const list: MyAssignment[] = rows.map((r) => {
    const view = studentScenarioView(r.definition as ScenarioDefinition);
    const own = termsFor(r, extensions.get(r.id));
    return {
      id: r.id,
      classId: r.classId,
      className: r.className,
      title: r.title,
      summary: view.summary,
      difficulty: view.difficulty,
      vehicleName: view.vehicle.name,
      vehicleKind: view.vehicle.kind,
      opensAt: r.opensAt.toISOString(),
      dueAt: own.dueAt.toISOString(),
      attemptsAllowed: own.attemptsAllowed,
      attemptsUsed: used.find((u) => u.assignmentId === r.id)?.n ?? 0,
      closed: own.dueAt < now,
      showCurveAfter: r.showCurveAfter,
      showFeedbackAfter: r.showFeedbackAfter,
    };
  });
  return list;
}

/** Creates an assignment of a scenario version (and its fault pool) for a class the user manages. */
export async function createAssignment(db: Db, user: SessionUser, input: z.output<typeof createAssignmentSchema>): Promise<number> {
  return db.transaction(async (tx) => {
    await assertCanManageClass(tx, user, input.classId);
    const scenario = await assertCanSeeScenario(tx, user, input.scenarioId);
    const versionId = input.scenarioVersionId ?? scenario.publishedVersionId;
    if (versionId === null) throw badRequest('scenarioVersionId: this scenario has no published version; publish one or name the version', { field: 'scenarioVersionId' });
    const [version] = await tx
      .select({ id: scenarioVersions.id, title: scenarioVersions.title })
      .from(scenarioVersions)
      .where(and(eq(scenarioVersions.id, versionId), eq(scenarioVersions.scenarioId, scenario.id)));
    if (!version) throw badRequest('scenarioVersionId: that version does not belong to this scenario', { field: 'scenarioVersionId' });
    const pool = await resolvePool(tx, user, version.id, input.pool);
    const [row] = await tx
      .insert(assignments)
      .values({
        classId: input.classId,
        scenarioVersionId: version.id,
        title: input.title ?? version.title,
        opensAt: new Date(input.opensAt),
        dueAt: new Date(input.dueAt),
        attemptsAllowed: input.attemptsAllowed,
        showCurveAfter: input.showCurveAfter,
        showFeedbackAfter: input.showFeedbackAfter,
        allowPractice: input.allowPractice,
        poolSeed: randomInt(0, 2 ** 31),
        createdBy: user.id,
      })
      .returning({ id: assignments.id });
    if (!row) throw new HttpError(500, 'Assignment was not created');
    if (pool.length > 1) await tx.insert(assignmentPool).values(pool.map((scenarioVersionId, position) => ({ assignmentId: row.id, scenarioVersionId, position })));
    return row.id;
  });
}

/** What an enrolled student is shown of an assignment: attempts used and the student-safe scenario view. */
export async function studentAssignmentView(db: DbOrTx, userId: number, row: { id: number; scenarioVersionId: number }) {
  const [version] = await db.select({ definition: scenarioVersions.definition }).from(scenarioVersions).where(eq(scenarioVersions.id, row.scenarioVersionId));
  if (!version) throw notFound('No such scenario version');
  const [countRow] = await db
    .select({ n: sql<number>`count(*)::int` })
    .from(attempts)
    .where(and(eq(attempts.userId, userId), eq(attempts.assignmentId, row.id)));
  return { attemptsUsed: countRow?.n ?? 0, scenario: studentScenarioView(version.definition as ScenarioDefinition) };
}

/** Dates, attempts, title or what is shown after submission; the due date must stay after the opening. */
export async function updateAssignment(db: Db, user: SessionUser, id: number, input: UpdateAssignmentInput): Promise<void> {
  await db.transaction(async (tx) => {
    const row = await assertCanManageAssignment(tx, user, id);
    const opensAt = input.opensAt ? new Date(input.opensAt) : row.opensAt;
    const dueAt = input.dueAt ? new Date(input.dueAt) : row.dueAt;
    if (dueAt <= opensAt) throw badRequest(input.dueAt ? 'dueAt must be after the opening date' : 'opensAt must be before the due date', { field: input.dueAt ? 'dueAt' : 'opensAt' });
    await tx
      .update(assignments)
      .set({
        ...(input.title !== undefined ? { title: input.title } : {}),
        opensAt,
        dueAt,
        ...(input.attemptsAllowed !== undefined ? { attemptsAllowed: input.attemptsAllowed } : {}),
        ...(input.showCurveAfter !== undefined ? { showCurveAfter: input.showCurveAfter } : {}),
        ...(input.showFeedbackAfter !== undefined ? { showFeedbackAfter: input.showFeedbackAfter } : {}),
        updatedAt: new Date(),
      })
      .where(eq(assignments.id, id));
  });
}

/** Every student of the class on this assignment: not started, started or submitted, with their own terms. */
export async function assignmentStudents(db: DbOrTx, row: Parameters<typeof termsFor>[0] & { classId: number }, id: number): Promise<AssignmentStudent[]> {
  const [people, counts, extensions] = await Promise.all([
    db
      .select({ studentId: users.id, name: users.name, email: users.email })
      .from(enrollments)
      .innerJoin(users, eq(users.id, enrollments.userId))
      .where(eq(enrollments.classId, row.classId))
      .orderBy(asc(users.name)),
    db
      .select({
        userId: attempts.userId,
        n: sql<number>`count(*)::int`,
        submitted: sql<number>`count(*) filter (where ${attempts.status} = 'submitted')::int`,
        latest: sql<number>`max(${attempts.id})::int`,
      })
      .from(attempts)
      .where(eq(attempts.assignmentId, id))
      .groupBy(attempts.userId),
    extensionsOfAssignment(db, id),
  ]);
  const students: AssignmentStudent[] = people.map((p) => {
    const c = counts.find((x) => x.userId === p.studentId);
    const ext = extensions.get(p.studentId) ?? null;
    const own = termsFor(row, ext);
    return {
      ...p,
      progress: !c ? 'not-started' : c.submitted > 0 ? 'submitted' : 'in-progress',
      attemptsUsed: c?.n ?? 0,
      attemptsAllowed: own.attemptsAllowed,
      dueAt: own.dueAt.toISOString(),
      extension: ext ? { dueAt: ext.dueAt ? ext.dueAt.toISOString() : null, extraAttempts: ext.extraAttempts } : null,
      latestAttemptId: c?.latest ?? null,
    };
  });
  return students;
}

/** One student's own terms: a later due date, extra attempts, or both. */
export async function setExtension(db: Db, user: SessionUser, id: number, userId: number, input: ExtensionInput): Promise<void> {
  await db.transaction(async (tx) => {
    const row = await assertCanManageAssignment(tx, user, id);
    if (!(await isEnrolled(tx, userId, row.classId))) throw badRequest('userId: that student is not in the class of this assignment', { field: 'userId' });
    const dueAt = input.dueAt ? new Date(input.dueAt) : null;
    if (dueAt && dueAt <= row.opensAt) throw badRequest('dueAt must be after the opening date', { field: 'dueAt' });
    const values = { dueAt, extraAttempts: input.extraAttempts, createdBy: user.id, updatedAt: new Date() };
    await tx
      .insert(assignmentExtensions)
      .values({ assignmentId: id, userId, ...values })
      .onConflictDoUpdate({ target: [assignmentExtensions.assignmentId, assignmentExtensions.userId], set: values });
  });
}

export async function removeExtension(db: DbOrTx, id: number, userId: number): Promise<void> {
  await db.delete(assignmentExtensions).where(and(eq(assignmentExtensions.assignmentId, id), eq(assignmentExtensions.userId, userId)));
}

/** Deletes an assignment no student has started. */
export async function deleteAssignment(db: Db, user: SessionUser, id: number): Promise<void> {
  await db.transaction(async (tx) => {
    await assertCanManageAssignment(tx, user, id);
    const [started] = await tx.select({ id: attempts.id }).from(attempts).where(eq(attempts.assignmentId, id)).orderBy(desc(attempts.id)).limit(1);
    if (started) throw new HttpError(409, 'Students have started this assignment; it can no longer be deleted');
    await tx.delete(assignments).where(eq(assignments.id, id));
  });
}
