import { describe, expect, it } from 'vitest';
import { demoFirst } from '../../server/db/demo-people.ts';
import { SCREENSHOT_DIR } from './browser.ts';
import { browserAndServerForFile, signInAs, watchConsole } from './support.ts';
import { hookUp, openBench, openPanel, scenarioIdOf, serverAttempt, toggleAccessory } from './bench-helpers.ts';

const e2e = browserAndServerForFile();

describe('the network cut mid-attempt', () => {
  it('keeps running, keeps every event through a reload, and sends them all once the network is back', async () => {
    const scenarioId = await scenarioIdOf(e2e.app, 'healthy-control-corvane-linden');
    const page = await e2e.browser.newPage({ viewport: { width: 1360, height: 900 } });
    const problems = watchConsole(page);
    await signInAs(page, e2e.app.url, demoFirst('student').email);
    const attemptId = await openBench(page, e2e.app.url, `scenarioId=${scenarioId}`);
    const status = page.getByTestId('connection-status');

    // Online: three events, saved.
    await hookUp(page, { red: 'battery-pos', black: 'battery-neg' });
    await page.getByRole('button', { name: 'Key on' }).click();
    await expect.poll(() => status.textContent(), { timeout: 15_000 }).toBe('All saved');
    expect((await serverAttempt(page, attemptId)).events).toHaveLength(3);

    // The network to the event log drops.
    await page.route('**/api/attempts/*/events', (route) => route.abort('internetdisconnected'));
    const switches = ['Headlamps (low beam)', 'Heater blower (high)', 'Rear window defroster', 'Audio system'];
    for (const name of switches) await toggleAccessory(page, name);
    const dial = page.getByRole('slider', { name: 'Carbon pile load' });
    await dial.focus();
    for (let i = 0; i < 3; i++) await page.keyboard.press('PageUp');
    await expect.poll(() => status.textContent(), { timeout: 15_000 }).toMatch(/^Offline — 7 events waiting$/);
    // The bench keeps running meanwhile.
    const timeBefore = await page.getByLabel(/^Bench time/).getAttribute('aria-label');
    await expect.poll(() => page.getByLabel(/^Bench time/).getAttribute('aria-label'), { timeout: 15_000 }).not.toBe(timeBefore);
    await page.screenshot({ path: `${SCREENSHOT_DIR}/bench-offline.png` });

    // A reload while still cut off: the bench resumes from the server's events plus the ones kept in this e2e.browser.
    await page.reload();
    await dial.waitFor();
    await openPanel(page, 'Car');
    for (const name of switches) await expect.poll(() => page.getByRole('button', { name, exact: true }).getAttribute('aria-pressed')).toBe('true');
    await expect.poll(() => dial.getAttribute('aria-valuenow')).toBe('30');
    await page.getByRole('button', { name: 'Wipers', exact: true }).click();
    await expect.poll(() => status.textContent(), { timeout: 15_000 }).toMatch(/^Offline — 8 events waiting$/);
    expect((await serverAttempt(page, attemptId)).events).toHaveLength(3);

    // The network returns: everything arrives, each event once, in order.
    await page.unroute('**/api/attempts/*/events');
    await expect.poll(() => status.textContent(), { timeout: 40_000 }).toBe('All saved');
    const stored = await serverAttempt(page, attemptId);
    expect(stored.events.map((e) => e.seq)).toEqual([1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 11]);
    expect(stored.attempt.lastSeq).toBe(11);
    expect(stored.events.map((e) => e.event.kind)).toEqual(['lead', 'lead', 'key', 'accessory', 'accessory', 'accessory', 'accessory', 'pile', 'pile', 'pile', 'accessory']);
    const times = stored.events.map((e) => e.event.atMs);
    expect([...times].sort((a, b) => a - b)).toEqual(times);
    await page.screenshot({ path: `${SCREENSHOT_DIR}/bench-back-online.png` });
    // Aborted posts show up as failed loads in the console; nothing else may.
    expect(problems.filter((p) => !/Failed to load resource: net::ERR_INTERNET_DISCONNECTED/.test(p))).toEqual([]);
    await page.close();
  });
});
