import type { Page } from 'playwright-core';
import { describe, expect, it } from 'vitest';
import { eq } from 'drizzle-orm';
import { demoFirst } from '../../server/db/demo-people.ts';
import { scenarios, scenarioVersions } from '../../server/db/schema.ts';
import { restoreScenario } from '../../shared/scenario.ts';
import { SCREENSHOT_DIR } from './browser.ts';
import { browserAndServerForFile, signInAs, watchConsole } from './support.ts';
import { assignToStudent, awaitSetup, diagnose, holdRpm, hookUp, loadDownTo, reading, recordReading, startEngine, turnDial } from './bench-helpers.ts';

const e2e = browserAndServerForFile();

const pileAmps = async (page: Page) => Number(await page.getByTestId('pile-amps').textContent());

describe('a whole diagnosis of an assigned scenario', () => {
  it('starts from the bench list, runs every test of the family, submits and gets a verified grade', async () => {
    const student = demoFirst('student');
    const title = 'Full check before sale';
    await assignToStudent(e2e.app, 'healthy-control-corvane-linden', student.email, title);
    const page = await e2e.browser.newPage({ viewport: { width: 1360, height: 900 } });
    const problems = watchConsole(page);
    await signInAs(page, e2e.app.url, student.email);
    await page.goto(`${e2e.app.url}/bench`);
    await page.getByRole('button', { name: `Start ${title}` }).click();
    await page.waitForURL(/\/bench\/\d+$/);
    const dial = page.getByRole('slider', { name: 'Carbon pile load' });
    await dial.waitFor();
    const values: Record<string, number> = {};

    // Each reading is taken inside its test's set-up (shared/test-setups.ts), as the reference procedures do.
    // 1. State of charge: key off, leads on the posts, the battery at rest (no charge has flowed yet).
    await hookUp(page, { red: 'battery-pos', black: 'battery-neg' });
    // The clamp is zeroed with its jaws away from any cable, then put on B+ for the tests that read it.
    await page.getByRole('button', { name: 'Zero clamp' }).click();
    await hookUp(page, { clamp: 'bplus-cable' });
    await page.getByRole('button', { name: 'Let 1 min pass on the bench' }).click();
    values.ocv = await reading(page, 'volts');
    await recordReading(page, 'battery-ocv');

    // 2. Load test: half the CCA for 15 s, engine off.
    await dial.focus();
    for (let i = 0; i < 100 && (await pileAmps(page)) < 300; i++) await page.keyboard.press((await pileAmps(page)) < 240 ? 'PageUp' : 'ArrowUp');
    expect(await pileAmps(page)).toBeGreaterThanOrEqual(300);
    // Ten seconds of the burst at once, then the rest of its hold as the bench runs.
    await page.getByRole('button', { name: 'Let 10 s pass on the bench' }).click();
    await awaitSetup(page, 'battery-load');
    values.loaded = await reading(page, 'volts');
    await recordReading(page, 'battery-load');
    await page.getByRole('button', { name: 'Load off' }).click();
    await page.getByRole('button', { name: 'Let 1 min pass on the bench' }).click();

    // 3. Regulated voltage at 2,000 rpm, no load, after the engine has run a while.
    await startEngine(page);
    await holdRpm(page, '2,000');
    await page.getByRole('button', { name: 'Let 1 min pass on the bench' }).click();
    await awaitSetup(page, 'regulated-voltage');
    values.regulated = await reading(page, 'volts');
    await recordReading(page, 'regulated-voltage');

    // 4. Output: load to about 12 V, hold it a moment, read the clamp, load off quickly.
    await loadDownTo(page, 12.05);
    await awaitSetup(page, 'output');
    values.output = await reading(page, 'amps');
    await recordReading(page, 'output');
    await page.getByRole('button', { name: 'Load off' }).click();

    // 5 and 6. Voltage drops with the pile on the posts drawing about 20 A, so the current runs through every joint.
    await dial.focus();
    for (let i = 0; i < 60 && (await pileAmps(page)) < 18; i++) await turnDial(page, (await pileAmps(page)) < 6 ? 'PageUp' : 'ArrowUp');
    expect(await pileAmps(page)).toBeGreaterThanOrEqual(15);
    expect(await pileAmps(page)).toBeLessThanOrEqual(30);
    values.chargeAmps = await reading(page, 'amps');
    await hookUp(page, { red: 'alt-bplus', black: 'battery-pos' });
    await page.getByRole('button', { name: 'Let 10 s pass on the bench' }).click();
    values.dropPositive = await reading(page, 'volts');
    await recordReading(page, 'voltage-drop-positive', 'voltage');
    await hookUp(page, { red: 'battery-neg', black: 'alt-case' });
    await page.getByRole('button', { name: 'Let 10 s pass on the bench' }).click();
    values.dropGround = await reading(page, 'volts');
    await recordReading(page, 'voltage-drop-ground');

    // 7. Ripple at the B+ stud against the case, the unit giving about half its rating, the heavy load kept short.
    await hookUp(page, { red: 'alt-bplus', black: 'alt-case' });
    const [healthy] = await e2e.app.server.ctx.db.select({ definition: scenarioVersions.definition }).from(scenarios).innerJoin(scenarioVersions, eq(scenarioVersions.id, scenarios.publishedVersionId)).where(eq(scenarios.slug, 'healthy-control-corvane-linden'));
    const ratedA = restoreScenario(healthy!.definition).vehicle.params.alternator.ratedCurrentA;
    await dial.focus();
    for (let i = 0; i < 80 && (await reading(page, 'amps')) < 0.5 * ratedA; i++) await turnDial(page, (await reading(page, 'amps')) < 0.5 * ratedA - 40 ? 'PageUp' : 'ArrowUp');
    values.rippleLoadA = await reading(page, 'amps');
    expect(values.rippleLoadA).toBeGreaterThanOrEqual(0.45 * ratedA);
    expect(values.rippleLoadA).toBeLessThanOrEqual(0.7 * ratedA);
    await awaitSetup(page, 'ripple');
    values.rippleMv = await reading(page, 'ripple');
    await recordReading(page, 'ripple', 'ripple');
    await page.getByRole('button', { name: 'Load off' }).click();
    await page.screenshot({ path: `${SCREENSHOT_DIR}/bench-full-diagnosis.png`, fullPage: true });

    // A healthy car reads like one.
    expect(values.ocv).toBeGreaterThanOrEqual(12.4);
    expect(values.loaded).toBeGreaterThanOrEqual(9.6);
    expect(values.regulated).toBeGreaterThanOrEqual(13.5);
    expect(values.regulated).toBeLessThanOrEqual(14.5);
    expect(values.output).toBeGreaterThanOrEqual(135);
    // With the pile drawing about 20 A, the B+ cable carries it and more; the B+ cable and the ground path of a sound car drop little.
    expect(values.chargeAmps).toBeGreaterThan(15);
    expect(Math.abs(values.dropPositive)).toBeLessThanOrEqual(0.2);
    expect(Math.abs(values.dropGround)).toBeLessThanOrEqual(0.2);
    expect(values.rippleMv).toBeLessThanOrEqual(500);

    const tests = [
      'Battery state of charge (open-circuit voltage)',
      'Battery load test',
      'Regulated (no-load) charging voltage',
      'Output test under carbon-pile load',
      'Voltage drop, positive side',
      'Voltage drop, ground side',
      'AC ripple (diode) check',
    ];
    await diagnose(page, Object.fromEntries(tests.map((t) => [t, 'Pass' as const])), 'No fault: the charging system is healthy');
    await expect.poll(() => page.getByTestId('result-verified').textContent()).toMatch(/^Verified:/);
    const grade = Number(((await page.getByTestId('result-grade').textContent()) ?? '').split(' / ')[0]);
    expect(grade).toBeGreaterThanOrEqual(90);
    const result = page.getByTestId('attempt-result');
    for (const t of tests) await expect.poll(() => result.getByRole('listitem').filter({ hasText: t }).textContent()).toMatch(/^OK/);
    await page.screenshot({ path: `${SCREENSHOT_DIR}/bench-full-diagnosis-result.png`, fullPage: true });
    expect(problems).toEqual([]);
    await page.close();
  });
});
