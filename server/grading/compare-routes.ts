/**
 * The class comparison of an assignment (/api/compare): diagnosis times,
 * correctness and mistakes per student, the distribution, accuracy per fault
 * and per test, and the grades as CSV. A student gets the distribution and
 * their own row only.
 */
import { mistakeLabel } from '../../shared/api/attempts.ts';
import { GRADES_CSV_COLUMNS, assignmentParamsSchema, type CompareResponse } from '../../shared/api/compare.ts';
import { requireAssignmentInstructor, requireAssignmentMember } from '../accounts/access.ts';
import { currentUser } from '../accounts/guard.ts';
import type { AppContext } from '../context.ts';
import { routeGroup } from '../http/route-table.ts';
import { parseParams } from '../http/validate.ts';
import { hiddenFor } from './result-views.ts';
import {
  accuracyByFault,
  accuracyByTest,
  assignmentHeader,
  assignmentShowing,
  countedRows,
  distribution,
  drawnGroups,
  faultLabel,
  submittedAttempts,
  toCsv,
} from './submitted-attempts.ts';

export function compareRoutes(ctx: AppContext) {
  const g = routeGroup('/api/compare');

  g.get('/assignments/:id', ['student', 'instructor', 'admin'], async (req, res) => {
    const { id } = parseParams(assignmentParamsSchema, req);
    const user = currentUser(req);
    const access = await requireAssignmentMember(ctx.db, user, id);
    const assignment = await assignmentHeader(ctx.db, id);
    const all = await submittedAttempts(ctx.db, id);
    const rows = countedRows(all);
    let body: CompareResponse;
    if (access.teaches) {
      const counted = all.filter((a) => rows.some((r) => r.attemptId === a.attemptId));
      body = {
        viewer: 'instructor',
        assignment,
        rows,
        groups: drawnGroups(rows, counted),
        distribution: distribution(rows, null),
        accuracyByFault: accuracyByFault(counted),
        accuracyByTest: accuracyByTest(counted),
      };
    } else {
      // A student sees their own row, without the fault they drew, and without the grade or the right answer while the assignment hides results.
      const hidden = hiddenFor(await assignmentShowing(ctx.db, id));
      const own = rows.find((r) => r.studentId === user.id) ?? null;
      const mine = own && { ...own, drawnFault: null, ...(hidden ? { grade: null, correct: null, verified: false } : {}) };
      body = { viewer: 'student', assignment, mine, distribution: distribution(rows, mine) };
    }
    res.json(body);
  });

  g.get('/assignments/:id/grades.csv', ['instructor', 'admin'], async (req, res) => {
    const { id } = parseParams(assignmentParamsSchema, req);
    await requireAssignmentInstructor(ctx.db, currentUser(req), id);
    const assignment = await assignmentHeader(ctx.db, id);
    const all = await submittedAttempts(ctx.db, id);
    const counting = new Set(countedRows(all).map((r) => r.attemptId));
    const yesNo = (b: boolean | null | undefined) => (b === null || b === undefined ? null : b ? 'yes' : 'no');
    const csv = toCsv(
      GRADES_CSV_COLUMNS,
      all.map((a) => [
        a.attemptId,
        a.studentName,
        a.studentEmail,
        assignment.title,
        a.drawnFault,
        a.submittedAt ? a.submittedAt.toISOString() : null,
        yesNo(counting.has(a.attemptId)),
        a.grade,
        yesNo(a.verified),
        a.result.fault?.given ? faultLabel(a.result.fault.given) : null,
        yesNo(a.result.fault?.ok),
        a.timeToDiagnosisMs === null ? null : a.timeToDiagnosisMs / 1000,
        a.result.mistakes?.length ?? 0,
        [...new Set((a.result.mistakes ?? []).map((m) => mistakeLabel(m.kind)))].join('; '),
      ]),
    );
    res.setHeader('Content-Type', 'text/csv; charset=utf-8');
    res.setHeader('Content-Disposition', `attachment; filename="grades-assignment-${id}.csv"`);
    res.send(csv);
  });

  return g;
}
