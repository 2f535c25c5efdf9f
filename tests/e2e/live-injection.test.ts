import { and, eq } from 'drizzle-orm';
import { describe, expect, it } from 'vitest';
import { demoFirst } from '../../server/db/demo-people.ts';
import { assignments, attemptEvents } from '../../server/db/schema.ts';
import { SCREENSHOT_DIR } from './browser.ts';
import { browserAndServerForFile, signInAs, watchConsole } from './support.ts';
import { assignToStudent, holdRpm, hookUp, openBench, reading, startEngine } from './bench-helpers.ts';

const e2e = browserAndServerForFile();

describe('live fault injection in the browser', () => {
  it('an instructor injects an open fusible link into a running demo attempt and the student’s meters show it', async () => {
    const student = demoFirst('student');
    const assignmentId = await assignToStudent(e2e.app, 'healthy-control-corvane-linden', student.email, 'Live session: charging check');
    const [assignment] = await e2e.app.server.ctx.db.select({ classId: assignments.classId }).from(assignments).where(eq(assignments.id, assignmentId));

    const studentCtx = await e2e.browser.newContext({ viewport: { width: 1360, height: 900 } });
    const teacherCtx = await e2e.browser.newContext({ viewport: { width: 1280, height: 900 } });
    const bench = await studentCtx.newPage();
    const board = await teacherCtx.newPage();
    const benchProblems = watchConsole(bench);
    const boardProblems = watchConsole(board);

    await signInAs(bench, e2e.app.url, student.email);
    const attemptId = await openBench(bench, e2e.app.url, `assignmentId=${assignmentId}`);
    await hookUp(bench, { red: 'battery-pos', black: 'battery-neg', clamp: 'bplus-cable' });
    // Zero the clamp where it sits, engine off, before reading current (common practice, no source: an
    // inductive clamp carries an offset of its own, up to a couple of amps here, that would hide a "nothing flows").
    await bench.getByRole('button', { name: 'Zero clamp' }).click();
    await expect.poll(async () => Math.abs(await reading(bench, 'amps')), { timeout: 10_000 }).toBeLessThan(0.3);
    await startEngine(bench);
    await holdRpm(bench, '2,000');
    // A healthy car charges: above 13.5 V at the battery and current in the B+ cable.
    await expect.poll(() => reading(bench, 'volts'), { timeout: 20_000 }).toBeGreaterThan(13.5);
    await expect.poll(() => reading(bench, 'amps'), { timeout: 20_000 }).toBeGreaterThan(2);

    await signInAs(board, e2e.app.url, demoFirst('instructor').email);
    await board.goto(`${e2e.app.url}/classes/${assignment!.classId}/live`);
    const card = board.getByRole('listitem', { name: new RegExp(`^${student.name}`) });
    await card.waitFor({ timeout: 15_000 });
    await expect.poll(() => board.getByRole('status').filter({ hasText: 'Live' }).count(), { timeout: 10_000 }).toBeGreaterThan(0);
    await card.getByRole('button', { name: `Inject a fault for ${student.name}` }).click();
    const form = board.getByRole('form', { name: `Inject a fault for ${student.name}` });
    await form.getByLabel('Fault').selectOption('fusible-link-open');
    await form.getByRole('button', { name: 'Inject' }).click();

    // The bench applies it and logs it; the board sees it land.
    await expect.poll(() => card.textContent(), { timeout: 10_000 }).toMatch(/Fusible link open · on the bench/);
    // No charge reaches the battery: the B+ cable carries nothing and the battery falls below its charging voltage.
    await expect.poll(() => reading(bench, 'amps'), { timeout: 15_000 }).toBeLessThan(1);
    await expect.poll(() => reading(bench, 'volts'), { timeout: 30_000 }).toBeLessThan(13);
    // The student is not told what happened.
    expect(await bench.getByText(/fusible link open/i).count()).toBe(0);

    // The bench logged it as a change of the car, once, and the server took that log as it stands: applied, not flagged.
    const logged = await e2e.app.server.ctx.db
      .select({ kind: attemptEvents.kind, source: attemptEvents.source })
      .from(attemptEvents)
      .where(and(eq(attemptEvents.attemptId, attemptId), eq(attemptEvents.kind, 'change-apply')));
    expect(logged).toEqual([{ kind: 'change-apply', source: 'instructor' }]);
    const injections = await board.evaluate(async (id) => (await (await fetch(`/api/live/attempts/${id}/injections`)).json()) as { injections: { status: string; flag: unknown }[] }, attemptId);
    expect(injections.injections.map((i) => [i.status, i.flag])).toEqual([['applied', null]]);

    await bench.screenshot({ path: `${SCREENSHOT_DIR}/live-bench-after-injection.png`, fullPage: true });
    await board.screenshot({ path: `${SCREENSHOT_DIR}/live-board.png`, fullPage: true });

    // The instructor clears it, and the bench logs that too.
    await card.getByRole('button', { name: new RegExp(`^Clear Fusible link open for ${student.name}`) }).click();
    await expect.poll(() => card.textContent(), { timeout: 10_000 }).toMatch(/· cleared/);

    expect(benchProblems).toEqual([]);
    expect(boardProblems).toEqual([]);
    await studentCtx.close();
    await teacherCtx.close();
  });
});
