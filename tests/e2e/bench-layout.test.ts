/**
 * The bench as one workspace at three screen sizes, during the output test
 * (engine at 2,000 rpm, the pile loaded): nothing runs wider than the screen,
 * and the meters, the load dial, the Record action and the procedure are in
 * view together. At 1366 × 768 (a school laptop) and 1024 × 768 (a shop
 * tablet in landscape, driven by touch) the page does not scroll at all; on a
 * phone (390 × 844) the reading strip stays at the top and Record at the
 * bottom while the student scrolls to the dial and to the procedure.
 */
import type { BrowserContextOptions, Locator, Page } from 'playwright-core';
import { describe, expect, it } from 'vitest';
import { demoFirst } from '../../server/db/demo-people.ts';
import { SCREENSHOT_DIR } from './browser.ts';
import { assignToStudent, hookUp, openBench, openPanel, reading } from './bench-helpers.ts';
import { browserAndServerForFile, signInAs, watchConsole } from './support.ts';

const e2e = browserAndServerForFile();

/** The part of a box that lies inside the window, checked edge by edge (a pixel of rounding allowed). */
async function inViewport(page: Page, target: Locator): Promise<boolean> {
  const box = await target.boundingBox();
  const size = page.viewportSize();
  if (!box || !size) return false;
  return box.x >= -1 && box.y >= -1 && box.x + box.width <= size.width + 1 && box.y + box.height <= size.height + 1;
}

/** How far the page runs past the window, across and down (0 when it fits). */
async function overflow(page: Page): Promise<{ across: number; down: number }> {
  return page.evaluate(() => {
    const el = document.documentElement;
    return { across: el.scrollWidth - el.clientWidth, down: el.scrollHeight - el.clientHeight };
  });
}

/** Presses a control the way the device would: a tap on a touch screen, a click otherwise. */
async function press(target: Locator, touch: boolean): Promise<void> {
  if (touch) await target.tap();
  else await target.click();
}

/** Opens an assigned bench, hooks up for the output test, starts the engine at 2,000 rpm and loads the pile. */
async function outputTestUnderLoad(page: Page, touch: boolean, title: string): Promise<void> {
  const student = demoFirst('student');
  const assignmentId = await assignToStudent(e2e.app, 'healthy-control-corvane-linden', student.email, title);
  await signInAs(page, e2e.app.url, student.email);
  await openBench(page, e2e.app.url, `assignmentId=${assignmentId}`);
  await hookUp(page, { red: 'battery-pos', black: 'battery-neg', clamp: 'bplus-cable' });
  await openPanel(page, 'Procedure');
  await press(page.getByRole('tablist', { name: 'Test procedures' }).getByRole('tab', { name: 'Output' }), touch);
  await expect.poll(() => page.getByTestId('procedure-title').textContent(), { timeout: 10_000 }).toMatch(/output/i);

  await press(page.getByRole('button', { name: 'Start', exact: true }), touch);
  await expect.poll(() => reading(page, 'rpm'), { timeout: 20_000 }).toBeGreaterThan(500);
  await expect.poll(() => page.getByTestId('engine-state').textContent(), { timeout: 15_000 }).toBe('Engine running');
  await press(page.getByRole('button', { name: '2,000', exact: true }), touch);
  await expect.poll(() => reading(page, 'rpm'), { timeout: 10_000 }).toBeGreaterThanOrEqual(1950);

  // Turn the dial to about half load: a tap at 12 o'clock on a touch screen, the keys otherwise.
  const dial = page.getByRole('slider', { name: 'Carbon pile load' });
  await dial.scrollIntoViewIfNeeded();
  if (touch) {
    const box = (await dial.boundingBox())!;
    await dial.tap({ position: { x: box.width / 2, y: box.height * 0.2 } });
  } else {
    await dial.focus();
    for (let i = 0; i < 5; i++) await page.keyboard.press('PageUp');
  }
  await expect.poll(async () => Number(await dial.getAttribute('aria-valuenow')), { timeout: 10_000 }).toBeGreaterThanOrEqual(40);
  await expect.poll(() => reading(page, 'amps'), { timeout: 10_000 }).toBeGreaterThan(40);
}

const SIZES: { name: string; file: string; options: BrowserContextOptions; scrolls: boolean }[] = [
  { name: 'a school laptop, 1366 × 768', file: 'layout-1366', options: { viewport: { width: 1366, height: 768 } }, scrolls: false },
  { name: 'a shop tablet in landscape, 1024 × 768 with touch', file: 'layout-1024-touch', options: { viewport: { width: 1024, height: 768 }, hasTouch: true }, scrolls: false },
  { name: 'a phone, 390 × 844', file: 'layout-390', options: { viewport: { width: 390, height: 844 }, hasTouch: true, isMobile: true, deviceScaleFactor: 2 }, scrolls: true },
];

describe('the bench as one workspace during the output test', () => {
  for (const size of SIZES) {
    it(`on ${size.name}: no sideways overflow, and the meters, dial, Record and procedure in view`, async () => {
      const context = await e2e.browser.newContext(size.options);
      const page = await context.newPage();
      const problems = watchConsole(page);
      const touch = size.options.hasTouch === true;
      await outputTestUnderLoad(page, touch, `Output test on ${size.file}`);

      const strip = page.getByTestId('reading-strip');
      const dial = page.getByRole('slider', { name: 'Carbon pile load' });
      const record = page.getByTestId('record-button');
      const procedure = page.getByTestId('procedure-title');
      const drawing = page.getByRole('img', { name: /^Engine bay schematic/ });

      const fit = await overflow(page);
      expect(fit.across).toBeLessThanOrEqual(0);
      if (!size.scrolls) {
        // One workspace: no page scroll at all, and every part of the test in view at once.
        expect(fit.down).toBeLessThanOrEqual(0);
        for (const part of [strip, drawing, dial, record, procedure]) expect(await inViewport(page, part)).toBe(true);
        await page.screenshot({ path: `${SCREENSHOT_DIR}/${size.file}-output-test.png` });
      } else {
        // A phone scrolls, but the strip stays at the top and Record at the bottom, whatever is in between.
        await dial.scrollIntoViewIfNeeded();
        for (const part of [strip, dial, record]) expect(await inViewport(page, part)).toBe(true);
        await page.screenshot({ path: `${SCREENSHOT_DIR}/${size.file}-output-test-dial.png` });
        await procedure.scrollIntoViewIfNeeded();
        for (const part of [strip, procedure, record]) expect(await inViewport(page, part)).toBe(true);
        await page.screenshot({ path: `${SCREENSHOT_DIR}/${size.file}-output-test-procedure.png` });
        // The readouts do not run into one another ("14.036.1"): each value sits inside its own cell.
        const cells = await page.getByTestId('reading-strip').locator('dd').evaluateAll((dds) =>
          dds.map((dd) => {
            const value = dd.firstElementChild!.getBoundingClientRect();
            const cell = dd.parentElement!.getBoundingClientRect();
            return value.left >= cell.left - 0.5 && value.right <= cell.right + 0.5;
          }),
        );
        expect(cells).toEqual(cells.map(() => true));
      }
      // Sideways overflow once more, after scrolling: nothing wider appeared.
      expect((await overflow(page)).across).toBeLessThanOrEqual(0);
      await press(page.getByRole('button', { name: 'Load off' }), touch);
      await expect.poll(() => dial.getAttribute('aria-valuenow'), { timeout: 10_000 }).toBe('0');
      expect(problems).toEqual([]);
      await context.close();
    });
  }
});
