import { readFileSync, writeFileSync } from 'node:fs';
import { createRequire } from 'node:module';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import type { Page } from 'playwright-core';
import { describe, expect, it } from 'vitest';
import { DEMO_PEOPLE } from '../../server/db/demo-people.ts';
import { SCREENSHOT_DIR } from './browser.ts';
import { browserAndServerForFile, signInAs, watchConsole } from './support.ts';

/** The machine may be busy: give the page time to answer. */
const POLL = { timeout: 15_000 };

const e2e = browserAndServerForFile();

const rune = DEMO_PEOPLE.filter((p) => p.role === 'instructor')[0]!;
// The first demo student is enrolled in the first instructor's section.
const ada = DEMO_PEOPLE.filter((p) => p.role === 'student')[0]!;

const axeSource = readFileSync(createRequire(import.meta.url).resolve('axe-core/axe.min.js'), 'utf8');

/** Serious and critical accessibility problems on the page, by axe-core's rules (WCAG 2 A/AA). */
async function accessibilityProblems(page: Page): Promise<string[]> {
  await page.evaluate(axeSource);
  return page.evaluate(async () => {
    const axe = (window as unknown as { axe: { run: (ctx: Document, opts: object) => Promise<{ violations: { id: string; impact: string | null; nodes: { target: string[] }[] }[] }> } }).axe;
    const result = await axe.run(document, { runOnly: { type: 'tag', values: ['wcag2a', 'wcag2aa'] } });
    return result.violations
      .filter((v) => v.impact === 'serious' || v.impact === 'critical')
      .map((v) => `${v.id}: ${v.nodes.map((n) => n.target.join(' ')).slice(0, 3).join(', ')}`);
  });
}

async function newPage(): Promise<{ page: Page; problems: string[] }> {
  const page = await e2e.browser.newPage({ viewport: { width: 1400, height: 900 } });
  return { page, problems: watchConsole(page) };
}

const title = 'Whine at idle on the test sedan';

describe('the instructor builds, publishes and assigns a scenario that a student then sees', () => {
  it('searches and filters the library table', async () => {
    const { page, problems } = await newPage();
    await signInAs(page, e2e.app.url, rune.email);
    await page.goto(`${e2e.app.url}/scenarios`);
    await expect.poll(() => page.getByRole('heading', { level: 1 }).textContent(), POLL).toBe('Scenario library');
    const rows = page.locator('tbody tr');
    await expect.poll(() => rows.count(), POLL).toBeGreaterThanOrEqual(14);
    await page.screenshot({ path: `${SCREENSHOT_DIR}/scenario-library.png`, fullPage: true });
    expect(await accessibilityProblems(page)).toEqual([]);
    await page.getByLabel('Fault').selectOption('belt-slip');
    await expect.poll(() => rows.count(), POLL).toBe(1);
    await expect.poll(() => rows.first().textContent(), POLL).toContain('Harlan Ridge compact pickup');
    await page.getByLabel('Fault').selectOption('');
    await page.getByLabel('Difficulty').selectOption('intro');
    await page.getByLabel('Test expected').selectOption('battery-load');
    await expect.poll(() => rows.count(), POLL).toBeGreaterThanOrEqual(1);
    const texts = await rows.allTextContents();
    expect(texts.every((t) => t.includes('Intro'))).toBe(true);
    await page.getByLabel('Difficulty').selectOption('');
    await page.getByLabel('Test expected').selectOption('');
    await page.getByRole('searchbox', { name: 'Search' }).fill('quillon');
    await expect.poll(() => rows.count(), POLL).toBe(1);
    expect(problems).toEqual([]);
    await page.close();
  });

  it('builds a scenario in the editor, sees the preview, publishes it and assigns it', async () => {
    const { page, problems } = await newPage();
    await signInAs(page, e2e.app.url, rune.email);
    await page.goto(`${e2e.app.url}/scenarios/new`);
    await page.getByLabel('Title').fill(title);
    await page.getByLabel('Customer’s complaint (what the student is told)').fill('The radio whines with the engine running and the lights flicker at idle.');
    await page.getByLabel('Vehicle name').fill('Lowmarsh Tally compact sedan');
    await page.getByLabel('Rated output (A)').fill('9999');
    await page.getByLabel('Rated output (A)').blur();
    await expect.poll(() => page.getByText('Rated output must be at most 250 A').count(), POLL).toBe(1);
    await page.getByLabel('Rated output (A)').fill('120');
    await page.getByRole('button', { name: 'Size the stator for 120 A' }).click();
    await page.getByRole('button', { name: 'Add a fault' }).click();
    await page.getByLabel('Fault 1', { exact: true }).selectOption('diode-open');
    await page.getByLabel('Severity').fill('1');
    await page.getByRole('group', { name: 'Tests the student is expected to run' }).getByLabel('AC ripple (diode) check').check();
    await expect.poll(() => page.getByTestId('output-curve-preview').count(), POLL).toBe(1);
    await expect.poll(() => page.getByTestId('output-curve-preview').locator('path').count(), POLL).toBe(2);
    await page.screenshot({ path: `${SCREENSHOT_DIR}/scenario-editor-new.png`, fullPage: true });
    await page.getByTestId('output-curve-preview').screenshot({ path: `${SCREENSHOT_DIR}/scenario-editor-preview.png` });
    expect(await accessibilityProblems(page)).toEqual([]);
    await page.getByRole('button', { name: 'Create scenario' }).click();
    await page.waitForURL(/\/scenarios\/\d+$/);
    await expect.poll(() => page.getByRole('heading', { level: 1 }).textContent(), POLL).toBe(title);

    // Edit: a new version.
    await page.getByLabel('Severity').fill('0.8');
    await page.getByLabel('What changed (optional)').fill('Milder');
    await page.getByRole('button', { name: 'Save as a new version' }).click();
    const versions = page.getByRole('list', { name: 'Versions' });
    await expect.poll(() => versions.getByRole('listitem').count(), POLL).toBe(2);
    await versions.getByRole('button', { name: 'Publish version 1' }).click();
    await expect.poll(() => versions.getByRole('listitem').nth(1).textContent(), POLL).toContain('Published');
    await versions.screenshot({ path: `${SCREENSHOT_DIR}/scenario-editor-versions.png` });

    await page.goto(`${e2e.app.url}/classes`);
    await page.getByRole('list', { name: 'Classes' }).getByRole('link').first().click();
    await page.waitForURL(/\/classes\/\d+$/);
    await page.getByLabel('Scenario (its published version)').selectOption({ label: `${title} (v1)` });
    await page.getByLabel('Title shown to students (optional)').fill('Week 4: radio whine');
    await page.getByLabel('Attempts allowed').fill('2');
    await page.getByRole('button', { name: 'Assign to the class' }).click();
    await expect.poll(() => page.getByRole('table', { name: 'Assignments' }).textContent(), POLL).toContain('Week 4: radio whine');
    await page.screenshot({ path: `${SCREENSHOT_DIR}/class-page.png`, fullPage: true });
    expect(await accessibilityProblems(page)).toEqual([]);
    expect(problems).toEqual([]);
    await page.close();
  });

  it('shows the assignment on the demo student’s list with its dates and attempts, and Start opens the bench', async () => {
    const { page, problems } = await newPage();
    await signInAs(page, e2e.app.url, ada.email);
    await page.goto(`${e2e.app.url}/bench`);
    const list = page.getByRole('list', { name: 'Your assignments' });
    await expect.poll(() => list.textContent(), POLL).toContain('Week 4: radio whine');
    const card = list.getByRole('listitem').filter({ hasText: 'Week 4: radio whine' });
    expect(await card.textContent()).toContain('0 of 2 used');
    expect(await card.textContent()).not.toMatch(/diode/i);
    await expect.poll(() => page.getByRole('list', { name: 'Practice scenarios' }).getByRole('listitem').count(), POLL).toBeGreaterThanOrEqual(14);
    await page.screenshot({ path: `${SCREENSHOT_DIR}/student-bench-home.png`, fullPage: true });
    expect(await accessibilityProblems(page)).toEqual([]);
    await card.getByRole('button', { name: /Start/ }).click();
    await page.waitForURL(/\/bench\/(new\?assignmentId=\d+|\d+)/);
    expect(problems.filter((p) => !/Failed to load resource/.test(p))).toEqual([]);
    await page.close();
  });
});

describe('imports', () => {
  it('names each bad path of a scenario file and imports nothing', async () => {
    const { page } = await newPage();
    await signInAs(page, e2e.app.url, rune.email);
    await page.goto(`${e2e.app.url}/scenarios`);
    const rows = page.locator('tbody tr');
    await expect.poll(() => rows.count(), POLL).toBeGreaterThanOrEqual(14);
    const before = await rows.count();
    const file = join(tmpdir(), `bad-scenario-${process.pid}.json`);
    writeFileSync(file, JSON.stringify({ format: 'loadline.scenario', formatVersion: 1, title: 'Bad', summary: 'short', difficulty: 'legendary', vehicle: { name: 'X', kind: 'van', engineDescription: 'none', params: { battery: { cca: 5 } } } }));
    await page.getByTestId('import-scenario-file').setInputFiles(file);
    const alert = page.getByRole('alert').filter({ hasText: 'Nothing was imported' });
    await expect.poll(() => alert.textContent(), POLL).toContain('Vehicle › Battery › Cold-cranking amps');
    expect(await alert.textContent()).toContain('Difficulty: Difficulty must be one of');
    await page.screenshot({ path: `${SCREENSHOT_DIR}/scenario-import-errors.png` });
    expect(await rows.count()).toBe(before);
    await page.close();
  });

  it('previews a roster with a bad line, refuses to import it, then imports a good one', async () => {
    const { page, problems } = await newPage();
    await signInAs(page, e2e.app.url, rune.email);
    await page.goto(`${e2e.app.url}/classes`);
    await page.getByRole('list', { name: 'Classes' }).getByRole('link').first().click();
    await page.waitForURL(/\/classes\/\d+$/);
    const bad = join(tmpdir(), `roster-bad-${process.pid}.csv`);
    writeFileSync(bad, 'name,email\nPia Rendle,pia.rendle@cindervalley.example\nNo Mail,not-an-address\n');
    await page.getByLabel('Roster file (CSV)').setInputFiles(bad);
    const preview = page.getByRole('table', { name: 'Roster preview' });
    await expect.poll(() => preview.textContent(), POLL).toContain('is not a valid e-mail address');
    expect(await page.getByRole('button', { name: /^Import \d+ students?$/ }).isDisabled()).toBe(true);
    await page.screenshot({ path: `${SCREENSHOT_DIR}/roster-preview-errors.png`, fullPage: true });
    const good = join(tmpdir(), `roster-good-${process.pid}.csv`);
    writeFileSync(good, 'name,email\nPia Rendle,pia.rendle@cindervalley.example\nTobin Asquell,tobin.asquell@cindervalley.example\n');
    await page.getByLabel('Roster file (CSV)').setInputFiles(good);
    await expect.poll(() => preview.textContent(), POLL).toContain('tobin.asquell@cindervalley.example');
    await page.getByRole('button', { name: 'Import 2 students' }).click();
    await expect.poll(() => page.getByText('Imported: 2 new accounts').count(), POLL).toBe(1);
    await expect.poll(() => page.getByRole('table', { name: 'Students' }).textContent(), POLL).toContain('Tobin Asquell');
    expect(problems).toEqual([]);
    await page.close();
  });
});
