import { createRequire } from 'node:module';
import { describe, expect, it } from 'vitest';
import { demoFirst } from '../../server/db/demo-people.ts';
import { SCREENSHOT_DIR } from './browser.ts';
import { browserAndServerForFile, signInAs, watchConsole } from './support.ts';
import { CLAMP_SPOTS, PARKED, POINT_XY, VIEW_H, VIEW_W } from '../../src/components/schematic/layout.ts';
import { holdRpm, hookUp, openBench, reading, scenarioIdOf, startEngine, toggleAccessory } from './bench-helpers.ts';

const e2e = browserAndServerForFile();

describe('the inductive clamp and the drawing', () => {
  it('hooks up by drag and by click in the drawing, and a reversed clamp reads negative', async () => {
    const scenarioId = await scenarioIdOf(e2e.app, 'healthy-control-corvane-linden');
    // bypassCSP only so the accessibility checker can be injected; the app itself runs under its CSP.
    const page = await e2e.browser.newPage({ viewport: { width: 1360, height: 900 }, bypassCSP: true });
    const problems = watchConsole(page);
    await signInAs(page, e2e.app.url, demoFirst('student').email);
    await openBench(page, e2e.app.url, `scenarioId=${scenarioId}`);

    const drawing = page.getByRole('img', { name: /Engine bay schematic/ });
    // The drawing keeps its proportions inside its box (the SVG default, "xMidYMid meet").
    const box = (await drawing.boundingBox())!;
    const scale = Math.min(box.width / VIEW_W, box.height / VIEW_H);
    const left = box.x + (box.width - VIEW_W * scale) / 2;
    const top = box.y + (box.height - VIEW_H * scale) / 2;
    const at = (x: number, y: number): [number, number] => [left + x * scale, top + y * scale];
    const drag = async (from: [number, number], to: [number, number]) => {
      await page.mouse.move(...at(...from));
      await page.mouse.down();
      for (let i = 1; i <= 12; i++) await page.mouse.move(...at(from[0] + ((to[0] - from[0]) * i) / 12, from[1] + ((to[1] - from[1]) * i) / 12));
      await page.mouse.up();
    };
    // Drag the red clip from where it hangs onto the battery positive post.
    await drag([PARKED.red[0], PARKED.red[1] - 8], [POINT_XY['battery-pos'][0], POINT_XY['battery-pos'][1]]);
    await expect.poll(() => drawing.getAttribute('aria-label')).toMatch(/red lead on the battery positive post/);
    // Click the black clip, then click the battery negative post.
    await page.mouse.click(...at(PARKED.black[0], PARKED.black[1] - 8));
    await page.mouse.click(...at(POINT_XY['battery-neg'][0] + 6, POINT_XY['battery-neg'][1] + 4));
    await expect.poll(() => drawing.getAttribute('aria-label')).toMatch(/black lead on the battery negative post/);
    // Pick the clamp up: every cable it can close on lights up as a place for it.
    await page.mouse.click(...at(PARKED.clamp[0], PARKED.clamp[1]));
    await expect.poll(() => page.locator('[data-clamp-place]').count()).toBe(5);
    await page.mouse.click(...at(PARKED.clamp[0], PARKED.clamp[1]));
    await expect.poll(() => page.locator('[data-clamp-place]').count()).toBe(0);
    // Drag the clamp onto the B+ cable.
    await drag([PARKED.clamp[0], PARKED.clamp[1]], [CLAMP_SPOTS['bplus-cable'].at[0], CLAMP_SPOTS['bplus-cable'].at[1] + 6]);
    await expect.poll(() => drawing.getAttribute('aria-label')).toMatch(/clamp on the B\+ cable, arrow toward the battery/);
    await hookUp(page, {});
    expect(await page.getByLabel('Inductive clamp', { exact: true }).inputValue()).toBe('bplus-cable');

    await startEngine(page);
    await holdRpm(page, '2,000');
    await toggleAccessory(page, 'Headlamps (low beam)');
    // A minute of bench time: the battery's recharge after the start has settled, so the B+ current holds
    // still while the clamp is turned round (a busy machine gives less real-time sim time, never less of this).
    await page.getByRole('button', { name: 'Let 1 min pass on the bench' }).click();
    await expect.poll(() => reading(page, 'amps')).toBeGreaterThan(5);
    const forward = await reading(page, 'amps');

    await hookUp(page, {});
    await page.getByRole('button', { name: 'Reverse clamp' }).click();
    await expect.poll(() => page.getByTestId('clamp-arrow').textContent()).toMatch(/toward the alternator/);
    await expect.poll(() => reading(page, 'amps')).toBeLessThan(-5);
    const reversed = await reading(page, 'amps');
    expect(Math.abs(reversed + forward)).toBeLessThan(Math.max(3, 0.15 * forward));
    expect((await page.getByTestId('reading-amps').textContent())!.startsWith('\u2212')).toBe(true);
    await page.screenshot({ path: `${SCREENSHOT_DIR}/bench-clamp-reversed.png`, fullPage: true });
    await drawing.screenshot({ path: `${SCREENSHOT_DIR}/bench-schematic.png` });

    // The live bench passes the WCAG 2 A/AA rules the checker knows.
    await page.addScriptTag({ path: createRequire(import.meta.url).resolve('axe-core/axe.min.js') });
    const violations = (await page.evaluate(
      'axe.run(document, { runOnly: ["wcag2a", "wcag2aa"] }).then((r) => r.violations.map((v) => v.id + ": " + v.nodes.map((n) => n.target.join(" ")).join(", ")))',
    )) as string[];
    expect(violations).toEqual([]);
    expect(problems).toEqual([]);
    await page.close();
  });
});
