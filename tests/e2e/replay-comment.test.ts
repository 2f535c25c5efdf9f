import { eq } from 'drizzle-orm';
import { describe, expect, it } from 'vitest';
import { DEMO_PEOPLE, demoFirst } from '../../server/db/demo-people.ts';
import type { Db } from '../../server/db/client.ts';
import { assignments, attemptEvents, attempts, scenarioVersions, users } from '../../server/db/schema.ts';
import { restoreScenario } from '../../shared/scenario.ts';
import type { InputEvent } from '../../sim/inputs.ts';
import { readMeters } from '../../sim/instruments.ts';
import { stateAt } from '../../sim/replay.ts';
import { SCREENSHOT_DIR } from './browser.ts';
import { browserAndServerForFile, signInAs, watchConsole } from './support.ts';
import { assignToStudent } from './bench-helpers.ts';

const e2e = browserAndServerForFile();

const SESSION: InputEvent[] = [
  { kind: 'lead', atMs: 1_000, which: 'red', point: 'battery-pos' },
  { kind: 'lead', atMs: 1_500, which: 'black', point: 'battery-neg' },
  { kind: 'clamp', atMs: 2_000, conductor: 'bplus-cable', arrow: 'toward-battery' },
  { kind: 'key', atMs: 4_000, position: 'start' },
  { kind: 'key', atMs: 5_200, position: 'on' },
  { kind: 'rpm', atMs: 8_000, rpm: 2_000 },
  { kind: 'pile', atMs: 15_000, dial01: 0.5 },
  { kind: 'pile', atMs: 30_000, dial01: 0 },
];

/** A submitted, graded attempt with a stored bench session, as the bench and the grader leave it. */
async function submittedAttempt(db: Db, email: string, assignmentId: number, timeMs: number, grade: number): Promise<number> {
  const [u] = await db.select({ id: users.id }).from(users).where(eq(users.email, email));
  const [a] = await db.select({ versionId: assignments.scenarioVersionId }).from(assignments).where(eq(assignments.id, assignmentId));
  const [row] = await db
    .insert(attempts)
    .values({
      userId: u!.id,
      scenarioVersionId: a!.versionId,
      assignmentId,
      mode: 'assigned',
      seed: 77,
      status: 'submitted',
      submittedAt: new Date(),
      lastSeq: SESSION.length,
      simTimeMs: 30_000,
      grade,
      verified: true,
      timeToDiagnosisMs: timeMs,
      diagnosis: { atMs: timeMs, faultKind: 'none', verdicts: [], notes: '' },
      readings: [{ id: 'r1', test: 'output', quantity: 'current', value: 120, unit: 'A', atMs: 18_000, where: 'B+ cable, pile loaded' }],
      result: { grade, verified: true, fault: { given: 'none', actual: ['none'], ok: true, labels: [] }, verdicts: [{ test: 'output', ok: true }], mistakes: [], timeToDiagnosisMs: timeMs },
    })
    .returning({ id: attempts.id });
  await db.insert(attemptEvents).values(SESSION.map((event, i) => ({ attemptId: row!.id, seq: i + 1, simTimeMs: event.atMs, kind: event.kind, payload: event })));
  return row!.id;
}

describe('replay with comments, the class comparison and sign-offs', () => {
  it('an instructor comments on a moment; the student’s replay scrubbed to that comment shows the bench as it was then', async () => {
    const student = demoFirst('student');
    const classmate = DEMO_PEOPLE.filter((p) => p.role === 'student')[1]!;
    const db = e2e.app.server.ctx.db;
    const assignmentId = await assignToStudent(e2e.app, 'healthy-control-corvane-linden', student.email, 'Replay review: charging check');
    const attemptId = await submittedAttempt(db, student.email, assignmentId, 36_000, 88);
    await submittedAttempt(db, classmate.email, assignmentId, 52_000, 74);

    const teacherCtx = await e2e.browser.newContext({ viewport: { width: 1280, height: 900 } });
    const teacher = await teacherCtx.newPage();
    const teacherProblems = watchConsole(teacher);
    await signInAs(teacher, e2e.app.url, demoFirst('instructor').email);
    await teacher.goto(`${e2e.app.url}/attempts/${attemptId}/replay`);
    const scrubber = teacher.getByRole('slider', { name: 'Replay position' });
    await scrubber.waitFor();
    await scrubber.fill('18000');
    await expect.poll(() => teacher.getByTestId('replay-time').textContent()).toBe('0:18.0');
    await teacher.getByLabel('Comment at 0:18.0').fill('Good: pile held while the reading settled.');
    await teacher.getByRole('button', { name: 'Add comment' }).click();
    await teacher.getByRole('list', { name: 'Comments' }).getByText('Good: pile held while the reading settled.').waitFor();
    await teacher.screenshot({ path: `${SCREENSHOT_DIR}/replay-instructor-comment.png`, fullPage: true });

    // The class comparison, sorted by grade.
    await teacher.goto(`${e2e.app.url}/assignments/${assignmentId}/compare`);
    const table = teacher.getByRole('table').last();
    await table.getByRole('cell', { name: student.name, exact: true }).waitFor();
    // Numbers sort highest first on the first press, lowest first on the second.
    await table.getByRole('button', { name: /Grade/ }).click();
    await expect.poll(() => table.getByRole('columnheader', { name: /Grade/ }).getAttribute('aria-sort')).toBe('descending');
    await expect.poll(async () => (await table.getByRole('row').nth(1).textContent()) ?? '').toContain(student.name);
    await table.getByRole('button', { name: /Grade/ }).click();
    await expect.poll(() => table.getByRole('columnheader', { name: /Grade/ }).getAttribute('aria-sort')).toBe('ascending');
    await expect.poll(async () => (await table.getByRole('row').nth(1).textContent()) ?? '').toContain(classmate.name);
    // Sign off a competency from the graded attempt.
    await table.getByRole('button', { name: `Sign off a competency for ${student.name}` }).click();
    const signOff = teacher.getByRole('form', { name: `Sign off a competency for ${student.name}` });
    await signOff.getByLabel('Competency').selectOption('output');
    await signOff.getByLabel('Note').fill('Steady pile work');
    await signOff.getByRole('button', { name: 'Sign off' }).click();
    await signOff.getByRole('status').filter({ hasText: `Output test under carbon-pile load signed off for ${student.name}` }).waitFor();
    await teacher.screenshot({ path: `${SCREENSHOT_DIR}/compare-instructor.png`, fullPage: true });
    expect(teacherProblems).toEqual([]);

    const studentCtx = await e2e.browser.newContext({ viewport: { width: 1280, height: 900 } });
    const page = await studentCtx.newPage();
    const problems = watchConsole(page);
    await signInAs(page, e2e.app.url, student.email);
    await page.goto(`${e2e.app.url}/attempts/${attemptId}/replay`);
    await page.getByRole('slider', { name: 'Replay position' }).waitFor();
    expect(await page.getByLabel('Comment at 0:00.0').count()).toBe(0);
    await page.getByRole('button', { name: `Go to 0:18.0, comment by ${demoFirst('instructor').name}` }).click();
    await expect.poll(() => page.getByTestId('replay-time').textContent()).toBe('0:18.0');

    // The voltmeter shows what the model gives at that moment of the stored run.
    const [v] = await db.select({ definition: scenarioVersions.definition }).from(scenarioVersions).innerJoin(attempts, eq(attempts.scenarioVersionId, scenarioVersions.id)).where(eq(attempts.id, attemptId));
    const def = restoreScenario(v!.definition);
    const events: InputEvent[] = [...def.faults.map((f) => ({ kind: 'fault-inject' as const, atMs: 0, fault: { ...f, intermittent: f.intermittent ?? null } })), ...SESSION];
    const expected = readMeters(def.vehicle.params, stateAt(def.vehicle.params, 77, events, 18_000).state);
    const volts = page.getByRole('term').filter({ hasText: /^Volts$/ }).locator('xpath=following-sibling::dd');
    await expect.poll(() => volts.first().textContent()).toBe(`${expected.voltmeterV!.toFixed(2)} V`);
    await page.screenshot({ path: `${SCREENSHOT_DIR}/replay-student-at-comment.png`, fullPage: true });

    // The student's comparison: their place, no classmate's name.
    await page.goto(`${e2e.app.url}/assignments/${assignmentId}/compare`);
    await page.getByRole('img', { name: /Yours: 0\.6 minutes, place 1 of 2/ }).waitFor();
    expect(await page.getByText(classmate.name).count()).toBe(0);
    await page.screenshot({ path: `${SCREENSHOT_DIR}/compare-student.png`, fullPage: true });

    // The sign-off shows on the student's progress page.
    await page.getByRole('link', { name: 'Progress' }).click();
    const output = page.getByRole('list', { name: 'Competencies' }).getByRole('listitem').filter({ hasText: 'Output test under carbon-pile load' });
    await output.getByText('Signed off').waitFor();
    expect(await output.textContent()).toContain('Steady pile work');
    await page.getByRole('status').filter({ hasText: '1 of 9 competencies signed off.' }).waitFor();
    await page.screenshot({ path: `${SCREENSHOT_DIR}/progress-student.png`, fullPage: true });
    expect(problems).toEqual([]);
    await studentCtx.close();
    await teacherCtx.close();
  });
});
