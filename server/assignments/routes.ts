/** Assignments: a scenario version given to a class, with dates, attempts allowed and what is shown after submission. */
import {
  assignmentIdParamsSchema,
  createAssignmentSchema,
  extensionParamsSchema,
  extensionSchema,
  listAssignmentsQuerySchema,
  updateAssignmentSchema,
} from '../../shared/api/assignments.ts';
import { assertCanManageAssignment, assertCanManageClass, assertCanSeeAssignment } from '../accounts/access.ts';
import { currentUser } from '../accounts/guard.ts';
import type { AppContext } from '../context.ts';
import { notFound } from '../http/errors.ts';
import { routeGroup } from '../http/route-table.ts';
import { parseBody, parseParams, parseQuery } from '../http/validate.ts';
import {
  assignmentRecord,
  assignmentStudents,
  classAssignments,
  createAssignment,
  deleteAssignment,
  myAssignments,
  removeExtension,
  setExtension,
  studentAssignmentView,
  updateAssignment,
} from './queries.ts';

const STAFF = ['instructor', 'admin'] as const;

export function assignmentRoutes(ctx: AppContext) {
  const g = routeGroup('/api/assignments');

  g.get('/', STAFF, async (req, res) => {
    const { classId } = parseQuery(listAssignmentsQuerySchema, req);
    await assertCanManageClass(ctx.db, currentUser(req), classId);
    res.json({ assignments: await classAssignments(ctx.db, classId) });
  });

  // A student's assignments: those of their classes that have opened, with attempts used.
  g.get('/mine', ['student'], async (req, res) => {
    const user = currentUser(req);
    const list = await myAssignments(ctx.db, user.id);
    res.json({ assignments: list });
  });

  g.post('/', STAFF, async (req, res) => {
    const user = currentUser(req);
    const input = parseBody(createAssignmentSchema, req);
    const id = await createAssignment(ctx.db, user, input);
    const created = await assignmentRecord(ctx.db, id);
    res.status(201).json({ assignment: created });
  });

  // One assignment: staff get the record; an enrolled student gets the student-safe scenario view.
  g.get('/:id', 'signed-in', async (req, res) => {
    const user = currentUser(req);
    const { id } = parseParams(assignmentIdParamsSchema, req);
    const row = await assertCanSeeAssignment(ctx.db, user, id);
    const assignment = await assignmentRecord(ctx.db, row.id);
    if (!assignment) throw notFound('No such assignment');
    if (user.role !== 'student') return res.json({ assignment });
    res.json({ assignment, ...(await studentAssignmentView(ctx.db, user.id, row)) });
  });

  // Dates, attempts, title or what is shown after submission; the due date must stay after the opening.
  g.patch('/:id', STAFF, async (req, res) => {
    const user = currentUser(req);
    const { id } = parseParams(assignmentIdParamsSchema, req);
    const input = parseBody(updateAssignmentSchema, req);
    await updateAssignment(ctx.db, user, id, input);
    const updated = await assignmentRecord(ctx.db, id);
    res.json({ assignment: updated });
  });

  // Every student of the class on this assignment: not started, started or submitted, with their own terms.
  g.get('/:id/students', STAFF, async (req, res) => {
    const { id } = parseParams(assignmentIdParamsSchema, req);
    const row = await assertCanManageAssignment(ctx.db, currentUser(req), id);
    const students = await assignmentStudents(ctx.db, row, id);
    res.json({ students });
  });

  // One student's own terms: a later due date, extra attempts, or both.
  g.put('/:id/extensions/:userId', STAFF, async (req, res) => {
    const user = currentUser(req);
    const { id, userId } = parseParams(extensionParamsSchema, req);
    const input = parseBody(extensionSchema, req);
    await setExtension(ctx.db, user, id, userId, input);
    res.status(204).end();
  });

  g.delete('/:id/extensions/:userId', STAFF, async (req, res) => {
    const user = currentUser(req);
    const { id, userId } = parseParams(extensionParamsSchema, req);
    await assertCanManageAssignment(ctx.db, user, id);
    await removeExtension(ctx.db, id, userId);
    res.status(204).end();
  });

  g.delete('/:id', STAFF, async (req, res) => {
    const user = currentUser(req);
    const { id } = parseParams(assignmentIdParamsSchema, req);
    await deleteAssignment(ctx.db, user, id);
    res.status(204).end();
  });

  return g;
}
