import { describe, expect, it } from 'vitest';
import { demoFirst } from '../../server/db/demo-people.ts';
import { SCREENSHOT_DIR } from './browser.ts';
import { browserAndServerForFile, signInAs, watchConsole } from './support.ts';
import { diagnose, holdRpm, hookUp, openBench, reading, recordReading, scenarioIdOf, startEngine } from './bench-helpers.ts';

const e2e = browserAndServerForFile();

describe('a faulted scenario, diagnosed in practice mode', () => {
  it('shows no charge with the engine running, and after a practice submission shows what the student named but not the car’s fault', async () => {
    const scenarioId = await scenarioIdOf(e2e.app, 'fusible-link-open-westmark-drover');
    const page = await e2e.browser.newPage({ viewport: { width: 1360, height: 900 } });
    const problems = watchConsole(page);
    await signInAs(page, e2e.app.url, demoFirst('student').email);
    await openBench(page, e2e.app.url, `scenarioId=${scenarioId}`);
    // The bench must not give the fault away before submission: the drawing shows the link intact, nothing warns of it.
    const drawing = page.getByRole('img', { name: /Engine bay schematic/ });
    expect(await drawing.getAttribute('aria-label')).not.toMatch(/link/i);
    expect(await drawing.textContent()).not.toMatch(/link open/i);
    expect(await page.getByRole('alert').count()).toBe(0);

    await hookUp(page, { red: 'battery-pos', black: 'battery-neg' });
    await expect.poll(() => reading(page, 'volts')).toBeGreaterThan(11);
    const resting = await reading(page, 'volts');
    await startEngine(page);
    await holdRpm(page, '2,000');
    await expect.poll(() => reading(page, 'rpm'), { timeout: 10_000 }).toBeGreaterThanOrEqual(1950);
    // Ten seconds of bench time at 2,000 rpm, without waiting for them.
    await page.getByRole('button', { name: 'Let 10 s pass on the bench' }).click();
    const running = await reading(page, 'volts');
    // No charge reaches the battery: the running voltage stays near the resting voltage, far below regulation.
    expect(running).toBeLessThan(13.2);
    expect(running).toBeLessThan(resting + 0.5);
    await recordReading(page, 'regulated-voltage');

    // Positive-side drop: B+ stud to battery positive reads the whole charging voltage across the open link.
    await hookUp(page, { red: 'alt-bplus', black: 'battery-pos' });
    await page.getByRole('button', { name: 'Let 10 s pass on the bench' }).click();
    await recordReading(page, 'voltage-drop-positive');
    await page.screenshot({ path: `${SCREENSHOT_DIR}/bench-faulted-running.png`, fullPage: true });

    await diagnose(
      page,
      { 'Regulated (no-load) charging voltage': 'Fail', 'Voltage drop, positive side': 'Fail' },
      'Fusible link open',
    );
    expect(await page.getByTestId('result-grade').textContent()).toBe('Practice');
    // Practice reveals nothing a live car would not, so the scenario can be practised again.
    expect(await page.getByTestId('result-fault').textContent()).toBe('You named: Fusible link open. The car’s fault is not shown here.');
    await page.screenshot({ path: `${SCREENSHOT_DIR}/bench-faulted-result.png`, fullPage: true });
    expect(problems).toEqual([]);
    await page.close();
  });
});
