import { createRequire } from 'node:module';
import { describe, expect, it } from 'vitest';
import { demoFirst } from '../../server/db/demo-people.ts';
import { SCREENSHOT_DIR } from './browser.ts';
import { browserAndServerForFile, signInAs, watchConsole } from './support.ts';
import { holdRpm, openBench, reading, scenarioIdOf, startEngine } from './bench-helpers.ts';

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
    const box = (await drawing.boundingBox())!;
    const at = (x: number, y: number): [number, number] => [box.x + (x / 1000) * box.width, box.y + (y / 540) * box.height];
    const drag = async (from: [number, number], to: [number, number]) => {
      await page.mouse.move(...at(...from));
      await page.mouse.down();
      for (let i = 1; i <= 12; i++) await page.mouse.move(...at(from[0] + ((to[0] - from[0]) * i) / 12, from[1] + ((to[1] - from[1]) * i) / 12));
      await page.mouse.up();
    };
    // Drag the red clip from where it hangs onto the battery positive post.
    await drag([868, 176], [130, 330]);
    await expect.poll(() => drawing.getAttribute('aria-label')).toMatch(/red lead on the battery positive post/);
    // Click the black clip, then click the battery negative post.
    await page.mouse.click(...at(942, 176));
    await page.mouse.click(...at(230, 330));
    await expect.poll(() => drawing.getAttribute('aria-label')).toMatch(/black lead on the battery negative post/);
    // Drag the clamp onto the B+ cable.
    await drag([905, 236], [600, 140]);
    await expect.poll(() => drawing.getAttribute('aria-label')).toMatch(/clamp on the b\+ charging cable, arrow toward the battery/);
    expect(await page.getByLabel('Inductive clamp', { exact: true }).inputValue()).toBe('bplus-cable');

    await startEngine(page);
    await holdRpm(page, '2,000');
    await page.getByRole('button', { name: 'Headlamps (low beam)' }).click();
    await page.waitForTimeout(3000);
    await expect.poll(() => reading(page, 'amps')).toBeGreaterThan(5);
    const forward = await reading(page, 'amps');

    await page.getByRole('button', { name: 'Reverse clamp' }).click();
    expect(await page.getByTestId('clamp-arrow').textContent()).toMatch(/toward the alternator/);
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
