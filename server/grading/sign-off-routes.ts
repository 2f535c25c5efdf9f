/**
 * Competency sign-offs (/api/sign-offs): an instructor signs off one test of
 * the family for a student, from a graded attempt whose scenario expected it;
 * the student's progress page reads them; the class's sign-offs export as CSV.
 */
import { classParamsSchema, createSignOffSchema, signOffParamsSchema, studentParamsSchema } from '../../shared/api/compare.ts';
import { canWithdrawSignOff, requireAttemptInstructor, requireClassInstructor, requireStudentReader, teachesStudent } from '../accounts/access.ts';
import { currentUser } from '../accounts/guard.ts';
import type { AppContext } from '../context.ts';
import { forbidden, notFound } from '../http/errors.ts';
import { routeGroup } from '../http/route-table.ts';
import { parseBody, parseParams } from '../http/validate.ts';
import { classSignOffsCsv, createSignOff, progressOf, signOffHolder, withdrawSignOff } from './sign-offs.ts';

export function signOffRoutes(ctx: AppContext) {
  const g = routeGroup('/api/sign-offs');

  g.get('/me', ['student'], async (req, res) => {
    const me = currentUser(req);
    res.json(await progressOf(ctx.db, me.id, { self: true, classIds: null }, me.id));
  });

  g.get('/students/:userId', ['student', 'instructor', 'admin'], async (req, res) => {
    const { userId } = parseParams(studentParamsSchema, req);
    const user = currentUser(req);
    const scope = await requireStudentReader(ctx.db, user, userId);
    res.json(await progressOf(ctx.db, userId, scope, user.id));
  });

  g.post('/', ['instructor', 'admin'], async (req, res) => {
    const user = currentUser(req);
    const input = parseBody(createSignOffSchema, req);
    const access = await requireAttemptInstructor(ctx.db, user, input.attemptId);
    res.status(201).json({ signOff: await createSignOff(ctx.db, user.id, access.ownerId, input) });
  });

  // Withdrawn only by the instructor who signed it, or an admin: another instructor of the student cannot undo it.
  g.delete('/:id', ['instructor', 'admin'], async (req, res) => {
    const { id } = parseParams(signOffParamsSchema, req);
    const user = currentUser(req);
    const row = await signOffHolder(ctx.db, id);
    if (!row) throw notFound('No such sign-off');
    if (!(await teachesStudent(ctx.db, user, row.userId))) throw forbidden('You do not teach this student');
    if (!canWithdrawSignOff(user, row)) throw forbidden('Only the instructor who signed this off, or an admin, can withdraw it');
    await withdrawSignOff(ctx.db, id);
    res.status(204).end();
  });

  g.get('/classes/:classId/sign-offs.csv', ['instructor', 'admin'], async (req, res) => {
    const { classId } = parseParams(classParamsSchema, req);
    const user = currentUser(req);
    await requireClassInstructor(ctx.db, user, classId);
    const csv = await classSignOffsCsv(ctx.db, user, classId);
    res.setHeader('Content-Type', 'text/csv; charset=utf-8');
    res.setHeader('Content-Disposition', `attachment; filename="sign-offs-class-${classId}.csv"`);
    res.send(csv);
  });

  return g;
}
