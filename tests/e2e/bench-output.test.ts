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

    // Leads on the battery posts, clamp on B+ with its arrow toward the battery, zeroed with the engine off.
    await hookUp(page, { red: 'battery-pos', black: 'battery-neg', clamp: 'bplus-cable' });
    await page.getByRole('button', { name: 'Zero clamp' }).click();
    expect(await page.getByTestId('clamp-arrow').textContent()).toMatch(/toward the battery/);
    await startEngine(page);
    await holdRpm(page, '2,000');
    await expect.poll(() => reading(page, 'rpm'), { timeout: 10_000 }).toBeGreaterThanOrEqual(1950);
    await page.waitForTimeout(1500);

    await loadDownTo(page, 12.05);
    await page.waitForTimeout(800);
    const volts = await reading(page, 'volts');
    const amps = await reading(page, 'amps');
    expect(volts).toBeGreaterThan(11.5);
    expect(volts).toBeLessThanOrEqual(12.3);
    expect(amps).toBeGreaterThanOrEqual(135);
    await recordReading(page, 'output');
    await page.screenshot({ path: `${SCREENSHOT_DIR}/bench-output-loaded.png`, fullPage: true });
    // Stop quickly: load off.
    await page.getByRole('button', { name: 'Load off' }).click();
    await expect.poll(() => page.getByRole('slider', { name: 'Carbon pile load' }).getAttribute('aria-valuenow')).toBe('0');

    await diagnose(page, { 'Output test under carbon-pile load': 'Pass' }, 'No fault: the charging system is healthy');
    const grade = (await page.getByTestId('result-grade').textContent()) ?? '';
    expect(grade).toMatch(/^\d+ \/ 100$/);
    expect(await page.getByTestId('result-verified').textContent()).toMatch(/verified/);
    expect(await page.getByTestId('result-fault').textContent()).toMatch(/No fault/);
    const verdictRow = page.getByTestId('attempt-result').getByRole('listitem').filter({ hasText: 'Output test under carbon-pile load' });
    expect(await verdictRow.textContent()).toMatch(/OK.*you said pass; it should pass/);
    await page.screenshot({ path: `${SCREENSHOT_DIR}/bench-output-result.png`, fullPage: true });

    // The attempt is in the student's table with its grade.
    await page.getByRole('link', { name: 'My attempts' }).first().click();
    await page.waitForURL(/\/attempts$/);
    await page.getByRole('heading', { name: 'My attempts' }).waitFor();
    await page.waitForTimeout(1000);
    await page.screenshot({ path: `${SCREENSHOT_DIR}/bench-my-attempts.png`, fullPage: true });
    const row = page.getByRole('row').filter({ hasText: 'Pre-purchase check' });
    await expect.poll(() => row.count()).toBe(1);
    expect(await row.textContent()).toMatch(/Submitted/);
    expect(problems).toEqual([]);
    await page.close();
  });
});
