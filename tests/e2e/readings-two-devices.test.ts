/**
 * Readings are stored as they are taken (issue 17): a student records on one
 * browser, opens the same attempt on a second, finds every reading there,
 * submits from it, and the result page's "You recorded" and "The bench
 * showed" are the replay's readings and readouts at the same moments.
 */
import { describe, expect, it } from 'vitest';
import { demoFirst } from '../../server/db/demo-people.ts';
import { SCREENSHOT_DIR } from './browser.ts';
import { browserAndServerForFile, signInAs, watchConsole } from './support.ts';
import { assignToStudent, diagnose, holdRpm, hookUp, loadDownTo, openBench, recordReading, startEngine } from './bench-helpers.ts';

const e2e = browserAndServerForFile();

describe('readings on two devices', () => {
  it('records on one browser, sees the readings on another, submits there, and the result equals the replay at the same moments', async () => {
    const student = demoFirst('student');
    const assignmentId = await assignToStudent(e2e.app, 'healthy-control-corvane-linden', student.email, 'Bench check across two devices');
    const first = await e2e.browser.newContext({ viewport: { width: 1360, height: 900 } });
    const second = await e2e.browser.newContext({ viewport: { width: 1360, height: 900 } });
    const a = await first.newPage();
    const b = await second.newPage();
    const problemsA = watchConsole(a);
    const problemsB = watchConsole(b);

    // The first device: three readings, each inside its test's set-up.
    await signInAs(a, e2e.app.url, student.email);
    const attemptId = await openBench(a, e2e.app.url, `assignmentId=${assignmentId}`);
    await hookUp(a, { red: 'battery-pos', black: 'battery-neg' });
    await a.getByRole('button', { name: 'Zero clamp' }).click();
    await hookUp(a, { clamp: 'bplus-cable' });
    await a.getByRole('button', { name: 'Let 1 min pass on the bench' }).click();
    await recordReading(a, 'battery-ocv', 'voltage');
    await startEngine(a);
    await holdRpm(a, '2,000');
    await a.getByRole('button', { name: 'Let 1 min pass on the bench' }).click();
    await recordReading(a, 'regulated-voltage', 'voltage', { inSetup: true });
    await loadDownTo(a, 12.05);
    await recordReading(a, 'output', 'current', { inSetup: true });
    await a.getByRole('button', { name: 'Load off' }).click();
    // "saved" on every reading once the server has stored it.
    await expect.poll(async () => (await a.getByTestId('reading-saved').allTextContents()).join(','), { timeout: 15_000 }).toBe('saved,saved,saved');
    await expect.poll(() => a.getByText('All saved').count(), { timeout: 15_000 }).toBeGreaterThan(0);
    const recordedOnA = await a.getByTestId('recorded-value').allTextContents();
    expect(recordedOnA).toHaveLength(3);

    // The second device: the same attempt shows the same readings, stored.
    await signInAs(b, e2e.app.url, student.email);
    await b.goto(`${e2e.app.url}/bench/${attemptId}`);
    await b.getByRole('slider', { name: 'Carbon pile load' }).waitFor();
    await expect.poll(() => b.getByTestId('recorded-value').allTextContents(), { timeout: 15_000 }).toEqual(recordedOnA);
    await expect.poll(() => b.getByTestId('reading-saved').allTextContents()).toEqual(['saved', 'saved', 'saved']);
    expect(await b.getByText('No readings recorded yet').count()).toBe(0);

    await diagnose(
      b,
      { 'Battery state of charge (open-circuit voltage)': 'Pass', 'Regulated (no-load) charging voltage': 'Pass', 'Output test under carbon-pile load': 'Pass' },
      'No fault: the charging system is healthy',
    );
    const rows = await b.getByTestId('result-reading').all();
    expect(rows).toHaveLength(3);
    const result: { atMs: number; recorded: string; shown: string }[] = [];
    for (const row of rows) {
      result.push({ atMs: Number(await row.getAttribute('data-at-ms')), recorded: (await row.getByTestId('result-recorded').textContent()) ?? '', shown: (await row.getByTestId('result-shown').textContent()) ?? '' });
      expect(await row.textContent()).toMatch(/Evidence/);
    }
    expect(result.map((r) => r.recorded)).toEqual(recordedOnA);
    for (const r of result) expect(r.shown).toBe(r.recorded);
    // The bench still open on the first device learns of the submission and closes, showing the same result.
    await expect.poll(() => a.getByTestId('result-reading').count(), { timeout: 20_000 }).toBe(3);
    await expect.poll(() => a.getByRole('slider', { name: 'Carbon pile load' }).count()).toBe(0);
    await b.screenshot({ path: `${SCREENSHOT_DIR}/two-devices-result.png`, fullPage: true });

    // The replay at each reading's moment: the reading as written and the bench's readout then.
    await b.getByRole('link', { name: 'Replay this attempt' }).click();
    await b.getByTestId('replay-readouts').waitFor();
    const readoutOf = { V: 'replay-volts', A: 'replay-amps' } as const;
    for (const r of result) {
      const item = b.locator(`[data-testid="replay-reading"][data-at-ms="${r.atMs}"]`);
      expect(await item.getByTestId('replay-reading-value').textContent()).toBe(r.recorded);
      expect(await item.getByTestId('replay-reading-verdict').textContent()).toBe('Evidence');
      await item.getByRole('button').click();
      await expect.poll(() => b.getByTestId('replay-readouts').getAttribute('data-at-ms')).toBe(String(r.atMs));
      const unit = r.shown.split(' ').pop() as keyof typeof readoutOf;
      await expect.poll(() => b.getByTestId(readoutOf[unit]).textContent()).toBe(r.shown);
    }
    await b.screenshot({ path: `${SCREENSHOT_DIR}/two-devices-replay.png`, fullPage: true });
    expect(problemsA).toEqual([]);
    expect(problemsB).toEqual([]);
    await first.close();
    await second.close();
  });
});
