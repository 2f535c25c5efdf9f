/** Classes (sections): list, read, create, and enrol or remove students one at a time. */
import { addStudentSchema, classIdParamsSchema, classStudentParamsSchema, createClassSchema } from '../../shared/api/classes.ts';
import { assertCanManageClass } from '../accounts/access.ts';
import { currentUser } from '../accounts/guard.ts';
import type { AppContext } from '../context.ts';
import { conflict, notFound } from '../http/errors.ts';
import { routeGroup } from '../http/route-table.ts';
import { parseBody, parseParams } from '../http/validate.ts';
import { sendEnrolmentNotice, sendPasswordLink } from '../accounts/invitations.ts';
import { classDetail, classIdsFor, classStudents, classSummaries, createClass, enrolStudent, removeStudent } from './queries.ts';

const STAFF = ['instructor', 'admin'] as const;

export function classRoutes(ctx: AppContext) {
  const g = routeGroup('/api/classes');

  // Instructors see the classes they teach, students the ones they are enrolled in, admins all.
  g.get('/', 'signed-in', async (req, res) => {
    const user = currentUser(req);
    const ids = await classIdsFor(ctx.db, user);
    const list = await classSummaries(ctx.db, ids);
    res.json({ classes: list });
  });

  g.get('/:id', STAFF, async (req, res) => {
    const { id } = parseParams(classIdParamsSchema, req);
    await assertCanManageClass(ctx.db, currentUser(req), id);
    res.json(await classDetail(ctx.db, id));
  });

  g.post('/', STAFF, async (req, res) => {
    const user = currentUser(req);
    const input = parseBody(createClassSchema, req);
    let instructorIds = user.role === 'instructor' ? [user.id] : (input.instructorIds ?? []);
    if (user.role === 'instructor' && input.instructorIds?.length) instructorIds = [...new Set([user.id, ...input.instructorIds])];
    const classId = await createClass(ctx.db, input, instructorIds);
    res.status(201).json(await classDetail(ctx.db, classId));
  });

  // Enrol one student by e-mail: an existing student account is told by e-mail, a new one is invited.
  g.post('/:id/students', STAFF, async (req, res) => {
    const user = currentUser(req);
    const { id } = parseParams(classIdParamsSchema, req);
    const input = parseBody(addStudentSchema, req);
    const outcome = await enrolStudent(ctx.db, user, id, input);
    let invited = false;
    if (outcome.created) {
      await sendPasswordLink(ctx, outcome.student, 'invite');
      invited = true;
    } else {
      // The enrolment stands even if the notice cannot be sent now; it is logged.
      try {
        await sendEnrolmentNotice(ctx, outcome.student, outcome.cls, user);
      } catch (err) {
        ctx.log('warn', `enrolment notice to ${outcome.student.email} was not sent`, err);
      }
    }
    const student = (await classStudents(ctx.db, id)).find((s) => s.id === outcome.student.id);
    res.status(201).json({ student, created: outcome.created, invited });
  });

  g.delete('/:id/students/:userId', STAFF, async (req, res) => {
    const user = currentUser(req);
    const { id, userId } = parseParams(classStudentParamsSchema, req);
    await assertCanManageClass(ctx.db, user, id);
    if (!(await removeStudent(ctx.db, id, userId))) throw notFound('That student is not in this class');
    res.status(204).end();
  });

  // Send a new invitation to a student of the class who has not set a password yet.
  g.post('/:id/students/:userId/invite', STAFF, async (req, res) => {
    const user = currentUser(req);
    const { id, userId } = parseParams(classStudentParamsSchema, req);
    await assertCanManageClass(ctx.db, user, id);
    const student = (await classStudents(ctx.db, id)).find((s) => s.id === userId);
    if (!student) throw notFound('That student is not in this class');
    if (student.hasPassword) throw conflict(`${student.email} has already set a password`, 'userId');
    await sendPasswordLink(ctx, student, 'invite');
    res.status(202).json({ message: `Invitation sent to ${student.email}` });
  });

  return g;
}
