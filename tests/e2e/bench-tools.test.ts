/**
 * The bench's tools in the browser: recording a reading in one action (the
 * test from the procedure in view, the meter its set-up names), the
 * voltmeter's min/max hold catching the dip while cranking, and the
 * scenario's hints on request (an event of the log, shown to the instructor
 * in the replay, counted by the grade as the scenario says).
 */
import { eq } from 'drizzle-orm';
import { describe, expect, it } from 'vitest';
import { demoFirst } from '../../server/db/demo-people.ts';
import { assignments, classInstructors, scenarios, scenarioVersions, users } from '../../server/db/schema.ts';
import { SCREENSHOT_DIR } from './browser.ts';
import { assignToStudent, hookUp, openBench, openPanel, reading, serverAttempt } from './bench-helpers.ts';
import { browserAndServerForFile, signInAs, watchConsole } from './support.ts';

const e2e = browserAndServerForFile();

const volts = (text: string | null) => Number((text ?? '').replace('\u2212', '-'));

describe('the bench tools', () => {
  it('records a reading in one action from the procedure in view, and the min/max hold keeps the cranking dip', async () => {
    const student = demoFirst('student');
    const assignmentId = await assignToStudent(e2e.app, 'healthy-control-corvane-linden', student.email, 'Bench tools round');
    const page = await e2e.browser.newPage({ viewport: { width: 1366, height: 768 } });
    const problems = watchConsole(page);
    await signInAs(page, e2e.app.url, student.email);
    await openBench(page, e2e.app.url, `assignmentId=${assignmentId}`);
    await hookUp(page, { red: 'battery-pos', black: 'battery-neg' });

    // The procedure in view decides the test and the meter: the record bar follows it.
    await openPanel(page, 'Procedure');
    const procedures = page.getByRole('tablist', { name: 'Test procedures' });
    await procedures.getByRole('tab', { name: 'Output' }).click();
    const form = page.getByRole('form', { name: 'Record a reading' });
    await expect.poll(() => form.getByLabel('Test').inputValue()).toBe('output');
    await expect.poll(() => page.getByTestId('record-reads').textContent()).toMatch(/Amps \(clamp\)/);
    // The procedure tabs move with the arrow keys (WAI-ARIA tabs): from Output, left is Regulated V, Home the first.
    await procedures.getByRole('tab', { name: 'Output' }).focus();
    await page.keyboard.press('ArrowLeft');
    await expect.poll(() => procedures.getByRole('tab', { selected: true }).textContent()).toBe('Regulated V');
    await page.keyboard.press('Home');
    await expect.poll(() => procedures.getByRole('tab', { selected: true }).textContent()).toBe('State of charge');
    await expect.poll(() => form.getByLabel('Test').inputValue()).toBe('battery-ocv');
    await expect.poll(() => page.getByTestId('record-reads').textContent()).toMatch(/DC volts/);

    // One action: Record. The reading is the volts shown, for the state-of-charge test.
    const shown = await reading(page, 'volts');
    await page.getByTestId('record-button').click();
    await openPanel(page, 'Readings');
    const recorded = page.getByTestId('recorded-reading');
    await expect.poll(() => recorded.count()).toBe(1);
    await expect.poll(() => recorded.first().textContent()).toMatch(/Battery state of charge/);
    const value = volts((await page.getByTestId('recorded-value').first().textContent())?.replace(/\s*V$/, '') ?? null);
    expect(Math.abs(value - shown)).toBeLessThanOrEqual(0.05);
    await expect.poll(() => page.getByTestId('reading-saved').first().textContent(), { timeout: 15_000 }).toBe('saved');

    // The min/max hold: on, then crank; the lowest volts shown while cranking stays on the strip.
    const holdSwitch = page.getByRole('button', { name: 'Min/max hold on the voltmeter' });
    await holdSwitch.click();
    await expect.poll(() => holdSwitch.getAttribute('aria-pressed')).toBe('true');
    const hold = page.getByTestId('volt-hold');
    const held = async () => {
      const m = /min ([\d.−-]+) · max ([\d.−-]+) V/.exec((await hold.textContent()) ?? '');
      return m ? { min: volts(m[1]!), max: volts(m[2]!) } : null;
    };
    await expect.poll(held).toEqual({ min: shown, max: shown });
    await page.getByRole('button', { name: 'Start', exact: true }).click();
    await expect.poll(() => page.getByTestId('engine-state').textContent(), { timeout: 15_000 }).toBe('Engine running');
    // Cranking pulls the battery well below its rest voltage; the alternator then lifts it above.
    await expect.poll(async () => (await held())!.max, { timeout: 15_000 }).toBeGreaterThan(13);
    const afterCrank = (await held())!;
    expect(afterCrank.min).toBeLessThan(shown - 0.8);
    expect(await reading(page, 'volts')).toBeGreaterThan(afterCrank.min + 0.8);
    await page.screenshot({ path: `${SCREENSHOT_DIR}/bench-tools-hold.png` });
    // Reset starts again from what is shown now.
    await page.getByRole('button', { name: 'Reset the min/max hold' }).click();
    await expect.poll(async () => (await held())!.min, { timeout: 10_000 }).toBeGreaterThan(afterCrank.min + 0.8);
    await holdSwitch.click();
    await expect.poll(() => hold.count()).toBe(0);
    expect(problems).toEqual([]);
    await page.close();
  });

  it('opens a hint only on request, logs it, keeps it after a reload, takes its points off the grade and shows it in the instructor’s replay', async () => {
    const db = e2e.app.server.ctx.db;
    const slug = 'diode-open-tarrow-flats';
    // This scenario's author charges 5 points a hint.
    const [sc] = await db.select({ versionId: scenarios.publishedVersionId }).from(scenarios).where(eq(scenarios.slug, slug));
    const [version] = await db.select({ definition: scenarioVersions.definition }).from(scenarioVersions).where(eq(scenarioVersions.id, sc!.versionId!));
    const definition = version!.definition as { hints: string[] };
    await db.update(scenarioVersions).set({ definition: { ...definition, hintPoints: 5 } }).where(eq(scenarioVersions.id, sc!.versionId!));
    const student = demoFirst('student');
    const assignmentId = await assignToStudent(e2e.app, slug, student.email, 'Hints round');

    const page = await e2e.browser.newPage({ viewport: { width: 1366, height: 768 } });
    const problems = watchConsole(page);
    await signInAs(page, e2e.app.url, student.email);
    const attemptId = await openBench(page, e2e.app.url, `assignmentId=${assignmentId}`);
    await openPanel(page, 'Procedure');
    const hints = page.getByTestId('hints');
    await hints.scrollIntoViewIfNeeded();
    await expect.poll(() => hints.textContent()).toMatch(/0 of 2 opened; each costs 5 points of the grade/);
    expect(await page.getByTestId('hint-text').count()).toBe(0);
    await page.getByTestId('hint-button').click();
    await expect.poll(() => page.getByTestId('hint-text').count()).toBe(1);
    await expect.poll(() => page.getByTestId('hint-text').first().textContent()).toBe(definition.hints[0]);
    // The hint is an event of the attempt's log, stored by the server.
    await expect.poll(async () => (await serverAttempt(page, attemptId)).events.filter((e) => e.event.kind === 'hint').length, { timeout: 15_000 }).toBe(1);
    await page.screenshot({ path: `${SCREENSHOT_DIR}/bench-tools-hint.png` });

    // A reload shows the same hint open, read back from the log.
    await page.reload();
    await openPanel(page, 'Procedure');
    await expect.poll(() => page.getByTestId('hint-text').count(), { timeout: 15_000 }).toBe(1);
    await expect.poll(() => page.getByTestId('hints').textContent()).toMatch(/1 of 2 opened/);

    // Submit (no readings: the bench asks first); the result counts the hint.
    await openPanel(page, 'Diagnose');
    const form = page.getByRole('form', { name: 'Diagnosis' });
    await form.getByLabel('Fault found').selectOption({ label: 'Open rectifier diode' });
    await form.getByRole('button', { name: 'Submit diagnosis' }).click();
    await page.getByRole('button', { name: 'Submit without readings' }).click();
    await page.getByTestId('attempt-result').waitFor({ timeout: 60_000 });
    expect(await page.getByTestId('result-hints').textContent()).toBe('Hints opened: 1 (−5 points)');
    await page.close();
    expect(problems).toEqual([]);

    // The instructor sees when it was opened, in the replay.
    const [a] = await db.select({ classId: assignments.classId }).from(assignments).where(eq(assignments.id, assignmentId));
    const [teacher] = await db.select({ email: users.email }).from(classInstructors).innerJoin(users, eq(users.id, classInstructors.userId)).where(eq(classInstructors.classId, a!.classId));
    const instructor = await e2e.browser.newPage({ viewport: { width: 1366, height: 768 } });
    await signInAs(instructor, e2e.app.url, teacher!.email);
    await instructor.goto(`${e2e.app.url}/attempts/${attemptId}/replay`);
    await instructor.getByText(/^Markers \(/).click();
    const marker = instructor.getByRole('button', { name: /Hint opened: Hint 1 opened/ });
    await marker.waitFor({ timeout: 20_000 });
    await instructor.screenshot({ path: `${SCREENSHOT_DIR}/replay-hint-marker.png`, fullPage: true });
    // And in the comparison of the class, beside the student's grade.
    await instructor.goto(`${e2e.app.url}/assignments/${assignmentId}/compare`);
    const row = instructor.getByRole('row').filter({ hasText: 'Ada Brightwater' });
    await row.waitFor({ timeout: 20_000 });
    expect(await row.locator('td[data-label="Hints opened"]').textContent()).toBe('1');
    await instructor.screenshot({ path: `${SCREENSHOT_DIR}/compare-hints.png`, fullPage: true });
    await instructor.close();
  });
});
