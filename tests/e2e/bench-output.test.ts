import { describe, expect, it } from 'vitest';
import { demoFirst } from '../../server/db/demo-people.ts';
import { SCREENSHOT_DIR } from './browser.ts';
import { browserAndServerForFile, signInAs, watchConsole } from './support.ts';
import { assignToStudent, diagnose, holdRpm, hookUp, loadDownTo, openBench, reading, recordReading, startEngine } from './bench-helpers.ts';

const e2e = browserAndServerForFile();

describe('a healthy output test, end to end', () => {
  it('hooks up, starts, holds 2,000 rpm, loads to about 12 V, records, submits and is graded pass on the output test', async () => {
    const student = demoFirst('student');
    const assignmentId = await assignToStudent(e2e.app, 'healthy-control-corvane-linden', student.email, 'Output test practice round');
    const page = await e2e.browser.newPage({ viewport: { width: 1360, height: 900 } });
    const problems = watchConsole(page);
    await signInAs(page, e2e.app.url, student.email);
    const attemptId = await openBench(page, e2e.app.url, `assignmentId=${assignmentId}`);
    expect(attemptId).toBeGreaterThan(0);

    // Leads on the battery posts; the clamp zeroed with its jaws away from any cable, then closed on B+ with its arrow toward the battery.
    await hookUp(page, { red: 'battery-pos', black: 'battery-neg' });
    await page.getByRole('button', { name: 'Zero clamp' }).click();
    await page.getByLabel('Inductive clamp', { exact: true }).selectOption('bplus-cable');
    await expect.poll(() => page.getByTestId('clamp-arrow').textContent()).toMatch(/toward the battery/);
    await startEngine(page);
    await holdRpm(page, '2,000');
    await expect.poll(() => reading(page, 'rpm'), { timeout: 10_000 }).toBeGreaterThanOrEqual(1950);
    // The engine runs for a while before a loaded test (the reference procedure's 45 s): let a minute pass on the bench.
    await page.getByRole('button', { name: 'Let 1 min pass on the bench' }).click();

    await loadDownTo(page, 12.05);
    await page.getByRole('form', { name: 'Record a reading' }).getByLabel('Test').selectOption('output');
    await expect.poll(() => page.getByTestId('setup-status').textContent(), { timeout: 30_000 }).toMatch(/^Set-up holds/);
    const volts = await reading(page, 'volts');
    const amps = await reading(page, 'amps');
    expect(volts).toBeGreaterThan(11.5);
    expect(volts).toBeLessThanOrEqual(12.3);
    expect(amps).toBeGreaterThanOrEqual(135);
    await recordReading(page, 'output', 'current', { inSetup: true });
    await page.screenshot({ path: `${SCREENSHOT_DIR}/bench-output-loaded.png`, fullPage: true });
    // Stop quickly: load off.
    await page.getByRole('button', { name: 'Load off' }).click();
    await expect.poll(() => page.getByRole('slider', { name: 'Carbon pile load' }).getAttribute('aria-valuenow')).toBe('0');

    await diagnose(page, { 'Output test under carbon-pile load': 'Pass' }, 'No fault: the charging system is healthy');
    const grade = (await page.getByTestId('result-grade').textContent()) ?? '';
    expect(grade).toMatch(/^\d+ \/ 100$/);
    expect(await page.getByTestId('result-verified').textContent()).toMatch(/verified/);
    expect(await page.getByTestId('result-fault').textContent()).toMatch(/No fault/);
    const verdictRow = page.getByTestId('attempt-result').getByRole('listitem').filter({ hasText: 'Output test under carbon-pile load' }).first();
    expect(await verdictRow.textContent()).toMatch(/OK.*you said pass; it should pass/);
    // The output reading was taken inside the test's set-up: it is evidence.
    expect(await page.getByTestId('attempt-result').textContent()).not.toMatch(/Output test under carbon-pile load: no reading inside its set-up/);
    await page.screenshot({ path: `${SCREENSHOT_DIR}/bench-output-result.png`, fullPage: true });

    // The attempt is in the student's table with its grade.
    await page.getByRole('link', { name: 'My attempts' }).first().click();
    await page.waitForURL(/\/attempts$/);
    await page.getByRole('heading', { name: 'My attempts' }).waitFor();
    const row = page.getByRole('row').filter({ hasText: 'Pre-purchase check' });
    await expect.poll(() => row.count(), { timeout: 10_000 }).toBe(1);
    await page.screenshot({ path: `${SCREENSHOT_DIR}/bench-my-attempts.png`, fullPage: true });
    expect(await row.textContent()).toMatch(/Submitted/);
    expect(problems).toEqual([]);
    await page.close();
  });
});
