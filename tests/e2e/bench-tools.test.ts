/**
 * The bench's tools in the browser: recording a reading in one action (the
 * test from the procedure in view, the meter its set-up names), the
 * voltmeter's min/max hold catching the dip while cranking.
 */
import { describe, expect, it } from 'vitest';
import { demoFirst } from '../../server/db/demo-people.ts';
import { SCREENSHOT_DIR } from './browser.ts';
import { assignToStudent, hookUp, openBench, openPanel, reading } from './bench-helpers.ts';
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
    expect(await page.getByTestId('record-reads').textContent()).toMatch(/Amps \(clamp\)/);
    // The procedure tabs move with the arrow keys (WAI-ARIA tabs): from Output, left is Regulated V, Home the first.
    await procedures.getByRole('tab', { name: 'Output' }).focus();
    await page.keyboard.press('ArrowLeft');
    await expect.poll(() => procedures.getByRole('tab', { selected: true }).textContent()).toBe('Regulated V');
    await page.keyboard.press('Home');
    await expect.poll(() => procedures.getByRole('tab', { selected: true }).textContent()).toBe('State of charge');
    await expect.poll(() => form.getByLabel('Test').inputValue()).toBe('battery-ocv');
    expect(await page.getByTestId('record-reads').textContent()).toMatch(/DC volts/);

    // One action: Record. The reading is the volts shown, for the state-of-charge test.
    const shown = await reading(page, 'volts');
    await page.getByTestId('record-button').click();
    await openPanel(page, 'Readings');
    const recorded = page.getByTestId('recorded-reading');
    await expect.poll(() => recorded.count()).toBe(1);
    expect(await recorded.first().textContent()).toMatch(/Battery state of charge/);
    const value = volts((await page.getByTestId('recorded-value').first().textContent())?.replace(/\s*V$/, '') ?? null);
    expect(Math.abs(value - shown)).toBeLessThanOrEqual(0.05);
    await expect.poll(() => page.getByTestId('reading-saved').first().textContent(), { timeout: 15_000 }).toBe('saved');

    // The min/max hold: on, then crank; the lowest volts shown while cranking stays on the strip.
    const holdSwitch = page.getByRole('button', { name: 'Min/max hold on the voltmeter' });
    await holdSwitch.click();
    expect(await holdSwitch.getAttribute('aria-pressed')).toBe('true');
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
});
