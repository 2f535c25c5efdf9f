/** Assignments: a scenario version given to a class, with dates, attempts allowed and what is shown after submission. */
import { and, asc, desc, eq, inArray, lte, sql } from 'drizzle-orm';
import {
  assignmentIdParamsSchema,
  createAssignmentSchema,
  listAssignmentsQuerySchema,
  type Assignment,
  type MyAssignment,
} from '../../shared/api/assignments.ts';
import { studentScenarioView, type ScenarioDefinition } from '../../shared/scenario.ts';
import { assertCanManageAssignment, assertCanManageClass, assertCanSeeAssignment, assertCanSeeScenario } from '../auth/access.ts';
import { currentUser } from '../auth/guard.ts';
import type { AppContext } from '../context.ts';
import type { DbOrTx } from '../db/client.ts';
import { assignments, attempts, classes, enrollments, scenarioVersions } from '../db/schema.ts';
import { badRequest, HttpError, notFound } from '../http/errors.ts';
import { routeGroup } from '../http/route-table.ts';
import { parseBody, parseParams, parseQuery } from '../http/validate.ts';

const STAFF = ['instructor', 'admin'] as const;

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
  createdAt: assignments.createdAt,
};

async function loadAssignments(db: DbOrTx, where: ReturnType<typeof eq>): Promise<Assignment[]> {
  const rows = await db
    .select(assignmentColumns)
    .from(assignments)
    .innerJoin(classes, eq(classes.id, assignments.classId))
    .innerJoin(scenarioVersions, eq(scenarioVersions.id, assignments.scenarioVersionId))
    .where(where)
    .orderBy(asc(assignments.dueAt), asc(assignments.id));
  return rows.map((r) => ({ ...r, opensAt: r.opensAt.toISOString(), dueAt: r.dueAt.toISOString(), createdAt: r.createdAt.toISOString() }));
}

export function assignmentRoutes(ctx: AppContext) {
  const g = routeGroup('/api/assignments');

  g.get('/', STAFF, async (req, res) => {
    const { classId } = parseQuery(listAssignmentsQuerySchema, req);
    await assertCanManageClass(ctx.db, currentUser(req), classId);
    res.json({ assignments: await loadAssignments(ctx.db, eq(assignments.classId, classId)) });
  });

  // A student's assignments: those of their classes that have opened, with attempts used.
  g.get('/mine', ['student'], async (req, res) => {
    const user = currentUser(req);
    const now = new Date();
    const rows = await ctx.db
      .select({ ...assignmentColumns, definition: scenarioVersions.definition })
      .from(assignments)
      .innerJoin(enrollments, and(eq(enrollments.classId, assignments.classId), eq(enrollments.userId, user.id)))
      .innerJoin(classes, eq(classes.id, assignments.classId))
      .innerJoin(scenarioVersions, eq(scenarioVersions.id, assignments.scenarioVersionId))
      .where(and(lte(assignments.opensAt, now), eq(classes.archived, false)))
      .orderBy(asc(assignments.dueAt), asc(assignments.id));
    const ids = rows.map((r) => r.id);
    const used = ids.length
      ? await ctx.db
          .select({ assignmentId: attempts.assignmentId, n: sql<number>`count(*)::int` })
          .from(attempts)
          .where(and(eq(attempts.userId, user.id), inArray(attempts.assignmentId, ids)))
          .groupBy(attempts.assignmentId)
      : [];
    const list: MyAssignment[] = rows.map((r) => {
      const view = studentScenarioView(r.definition as ScenarioDefinition);
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
        dueAt: r.dueAt.toISOString(),
        attemptsAllowed: r.attemptsAllowed,
        attemptsUsed: used.find((u) => u.assignmentId === r.id)?.n ?? 0,
        closed: r.dueAt < now,
        showCurveAfter: r.showCurveAfter,
        showFeedbackAfter: r.showFeedbackAfter,
      };
    });
    res.json({ assignments: list });
  });

  g.post('/', STAFF, async (req, res) => {
    const user = currentUser(req);
    const input = parseBody(createAssignmentSchema, req);
    const id = await ctx.db.transaction(async (tx) => {
      await assertCanManageClass(tx, user, input.classId);
      const scenario = await assertCanSeeScenario(tx, user, input.scenarioId);
      const versionId = input.scenarioVersionId ?? scenario.publishedVersionId;
      if (versionId === null) throw badRequest('scenarioVersionId: this scenario has no published version; publish one or name the version', { field: 'scenarioVersionId' });
      const [version] = await tx
        .select({ id: scenarioVersions.id, title: scenarioVersions.title })
        .from(scenarioVersions)
        .where(and(eq(scenarioVersions.id, versionId), eq(scenarioVersions.scenarioId, scenario.id)));
      if (!version) throw badRequest('scenarioVersionId: that version does not belong to this scenario', { field: 'scenarioVersionId' });
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
          createdBy: user.id,
        })
        .returning({ id: assignments.id });
      if (!row) throw new HttpError(500, 'Assignment was not created');
      return row.id;
    });
    const [created] = await loadAssignments(ctx.db, eq(assignments.id, id));
    res.status(201).json({ assignment: created });
  });

  // One assignment: staff get the record; an enrolled student gets the student-safe scenario view.
  g.get('/:id', 'signed-in', async (req, res) => {
    const user = currentUser(req);
    const { id } = parseParams(assignmentIdParamsSchema, req);
    const row = await assertCanSeeAssignment(ctx.db, user, id);
    const [assignment] = await loadAssignments(ctx.db, eq(assignments.id, row.id));
    if (!assignment) throw notFound('No such assignment');
    if (user.role !== 'student') return res.json({ assignment });
    const [version] = await ctx.db.select({ definition: scenarioVersions.definition }).from(scenarioVersions).where(eq(scenarioVersions.id, row.scenarioVersionId));
    if (!version) throw notFound('No such scenario version');
    const [countRow] = await ctx.db
      .select({ n: sql<number>`count(*)::int` })
      .from(attempts)
      .where(and(eq(attempts.userId, user.id), eq(attempts.assignmentId, row.id)));
    res.json({ assignment, attemptsUsed: countRow?.n ?? 0, scenario: studentScenarioView(version.definition as ScenarioDefinition) });
  });

  g.delete('/:id', STAFF, async (req, res) => {
    const user = currentUser(req);
    const { id } = parseParams(assignmentIdParamsSchema, req);
    await ctx.db.transaction(async (tx) => {
      await assertCanManageAssignment(tx, user, id);
      const [started] = await tx.select({ id: attempts.id }).from(attempts).where(eq(attempts.assignmentId, id)).orderBy(desc(attempts.id)).limit(1);
      if (started) throw new HttpError(409, 'Students have started this assignment; it can no longer be deleted');
      await tx.delete(assignments).where(eq(assignments.id, id));
    });
    res.status(204).end();
  });

  return g;
}
