/**
 * `npm run bench:ui`: builds the client, serves it on a throwaway copy of the
 * demo database, opens a practice bench in headless Chromium, drags the load
 * dial round and round for a few seconds with the engine running, and prints
 * the frame-time p50/p95 and the gzip size of the initial JavaScript, each
 * beside its goal. It then drags again with Chromium's CPU slowed four times
 * (a school laptop) and prints that p95 beside the unthrottled one.
 */
import { spawnSync } from 'node:child_process';
import { readFileSync } from 'node:fs';
import { cpus, loadavg } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { gzipSync } from 'node:zlib';
import { withTestCluster } from './test-cluster.ts';

const root = fileURLToPath(new URL('..', import.meta.url));
const DRAG_SECONDS = Number(process.env.BENCH_UI_SECONDS ?? 5);
const GOAL_P95_MS = 1000 / 60;
/** Chromium's CPU throttling rate for the slow-laptop run, and its goal: 30 frames a second. */
const THROTTLE_RATE = 4;
const GOAL_THROTTLED_P95_MS = 1000 / 30;
const GOAL_INITIAL_KB = 200;

function percentile(sorted: number[], p: number): number {
  if (sorted.length === 0) return Number.NaN;
  const i = Math.min(sorted.length - 1, Math.max(0, Math.ceil((p / 100) * sorted.length) - 1));
  return sorted[i]!;
}

/** The scripts index.html loads before any route: the entry and its preloads. */
function initialJsGzipBytes(): { bytes: number; files: string[] } {
  const dist = join(root, 'dist');
  const html = readFileSync(join(dist, 'index.html'), 'utf8');
  const files = [...html.matchAll(/<(?:script[^>]*\ssrc|link[^>]*rel="modulepreload"[^>]*\shref)="([^"]+\.js)"/g)].map((m) => m[1]!);
  const unique = [...new Set(files)];
  const bytes = unique.reduce((sum, f) => sum + gzipSync(readFileSync(join(dist, f.replace(/^\//, ''))), { level: 9 }).length, 0);
  return { bytes, files: unique };
}

async function main() {
  console.log('Building the client…');
  const build = spawnSync(join(root, 'node_modules', '.bin', 'vite'), ['build', '--logLevel', 'warn'], { cwd: root, stdio: 'inherit' });
  if (build.status !== 0) throw new Error('vite build failed');
  const initial = initialJsGzipBytes();

  const baseline: number[] = [];
  const throttled: number[] = [];
  const frames = await withTestCluster(async (env) => {
    Object.assign(process.env, { LOADLINE_TEST_PG: env.LOADLINE_TEST_PG, LOADLINE_TEST_TEMPLATE: env.LOADLINE_TEST_TEMPLATE });
    const { startE2eServer, signInAs } = await import('../tests/e2e/support.ts');
    const { launchBrowser } = await import('../tests/e2e/browser.ts');
    const { demoFirst } = await import('../server/db/demo-people.ts');
    const [app, browser] = await Promise.all([startE2eServer(), launchBrowser()]);
    try {
      const page = await browser.newPage({ viewport: { width: 1360, height: 900 } });
      await signInAs(page, app.url, demoFirst('student').email);
      const attemptId = await page.evaluate(async () => {
        const me = (await (await fetch('/api/auth/me')).json()) as { csrfToken: string };
        const list = (await (await fetch('/api/scenarios/practice')).json()) as { scenarios: { id: number }[] };
        const first = list.scenarios[0];
        if (!first) throw new Error('no practice scenario in the demo library');
        const res = await fetch('/api/attempts', {
          method: 'POST',
          headers: { 'Content-Type': 'application/json', 'X-CSRF-Token': me.csrfToken },
          body: JSON.stringify({ scenarioId: first.id, mode: 'practice' }),
        });
        if (!res.ok) throw new Error(`starting a practice attempt failed: ${res.status}`);
        return ((await res.json()) as { attempt: { id: number } }).attempt.id;
      });
      await page.goto(`${app.url}/bench/${attemptId}`);
      const dial = page.getByRole('slider', { name: 'Carbon pile load' });
      await dial.waitFor();
      // A realistic moment: leads on the posts, clamp on B+, engine at 2,000 rpm.
      await page.getByRole('tablist', { name: 'Bench panels' }).getByRole('tab', { name: 'Hook-up' }).click();
      await page.getByLabel('Red lead', { exact: true }).selectOption('battery-pos');
      await page.getByLabel('Black lead', { exact: true }).selectOption('battery-neg');
      await page.getByLabel('Inductive clamp', { exact: true }).selectOption('bplus-cable');
      await page.getByRole('button', { name: 'Start', exact: true }).click();
      await page.getByTestId('engine-state').filter({ hasText: 'Engine running' }).waitFor();
      await page.getByRole('button', { name: '2,000', exact: true }).click();
      await page.waitForFunction(() => Number(document.querySelector('[data-testid="reading-rpm"]')?.textContent?.replace(/\D/g, '')) >= 1900);

      const box = (await dial.boundingBox())!;
      const cx = box.x + box.width / 2;
      const cy = box.y + box.height / 2;
      const r = box.width * 0.35;
      // A plain script (not a bundled closure): it runs in the page as written.
      await page.evaluate(`(() => {
        window.__frames = [];
        window.__stop = false;
        let last = performance.now();
        const loop = (now) => {
          window.__frames.push(now - last);
          last = now;
          if (!window.__stop) requestAnimationFrame(loop);
        };
        requestAnimationFrame(loop);
      })()`);
      // Baseline: the same bench running, nobody touching it.
      await page.waitForTimeout(DRAG_SECONDS * 1000);
      baseline.push(...((await page.evaluate('(() => { const f = window.__frames.slice(1); window.__frames = []; return f; })()')) as number[]));
      // Grab the dial with the real mouse, then move it once per frame from inside the page, the way a
      // hand drags (the driver's own moves arrive only a dozen times a second).
      const drag = async (): Promise<{ moves: number; samples: number[] }> => {
        await page.evaluate('(() => { window.__frames = []; })()');
        await page.mouse.move(cx - r * 0.7, cy + r * 0.7);
        await page.mouse.down();
        const moves = (await page.evaluate(`new Promise((resolve) => {
          const dial = document.querySelector('[role="slider"][aria-label="Carbon pile load"]');
          const until = performance.now() + ${DRAG_SECONDS * 1000};
          let a = -0.75 * Math.PI, dir = 1, moves = 0;
          const step = (now) => {
            if (now >= until) return resolve(moves);
            a += dir * 0.035;
            if (a > 0.75 * Math.PI || a < -0.75 * Math.PI) dir = -dir;
            dial.dispatchEvent(new PointerEvent('pointermove', { bubbles: true, pointerId: 1, pointerType: 'mouse', isPrimary: true, buttons: 1,
              clientX: ${cx} + ${r} * Math.sin(a), clientY: ${cy} - ${r} * Math.cos(a) }));
            moves += 1;
            requestAnimationFrame(step);
          };
          requestAnimationFrame(step);
        })`)) as number;
        await page.mouse.up();
        const samples = (await page.evaluate('(() => { const f = window.__frames.slice(1); window.__frames = []; return f; })()')) as number[];
        return { moves, samples };
      };
      const { moves, samples } = await drag();
      // The same drag on a slower machine: Chromium's CPU throttling (DevTools protocol, Emulation.setCPUThrottlingRate).
      const cdp = await page.context().newCDPSession(page);
      await cdp.send('Emulation.setCPUThrottlingRate', { rate: THROTTLE_RATE });
      const slow = await drag();
      throttled.push(...slow.samples);
      await cdp.send('Emulation.setCPUThrottlingRate', { rate: 1 });
      await page.evaluate('(() => { window.__stop = true; })()');
      await page.getByRole('button', { name: 'Load off' }).click();
      // Let the outbox post its last batch before counting what the server stored.
      await page.getByText('All saved').waitFor({ timeout: 15_000 });
      const pileEvents = await page.evaluate(async (id) => {
        const boot = (await (await fetch(`/api/attempts/${id}`)).json()) as { events: { event: { kind: string } }[] };
        return boot.events.filter((e) => e.event.kind === 'pile').length;
      }, attemptId);
      console.log(`Dial drag: ${moves} pointer moves (${(moves / DRAG_SECONDS).toFixed(0)} per second), ${pileEvents} pile events dispatched and stored by the server.`);
      return samples;
    } finally {
      await browser.close();
      await app.close();
    }
  });

  const idle = [...baseline].sort((x, y) => x - y);
  const sorted = [...frames].sort((x, y) => x - y);
  const p50 = percentile(sorted, 50);
  const p95 = percentile(sorted, 95);
  const kb = initial.bytes / 1024;
  console.log('\nBench screen, dial dragged with the engine running (headless Chromium, software rendering):');
  console.log(`  frames measured     ${sorted.length} over ${DRAG_SECONDS} s`);
  console.log(`  frame time p50      ${p50.toFixed(1)} ms   (goal ≤ ${GOAL_P95_MS.toFixed(1)} ms: 60 fps)`);
  console.log(`  frame time p95      ${p95.toFixed(1)} ms   (goal ≤ ${GOAL_P95_MS.toFixed(1)} ms: 60 fps, 0.5 ms allowed for vsync timer jitter) ${p95 <= GOAL_P95_MS + 0.5 ? 'met' : 'NOT met'}`);
  console.log(`  initial JS (gzip)   ${kb.toFixed(1)} KB   (goal < ${GOAL_INITIAL_KB} KB) ${kb < GOAL_INITIAL_KB ? 'met' : 'NOT met'}  [${initial.files.join(', ')}]`);
  console.log(`  baseline, no input  p50 ${percentile(idle, 50).toFixed(1)} ms, p95 ${percentile(idle, 95).toFixed(1)} ms over ${idle.length} frames (the machine's own noise floor)`);
  const slow = [...throttled].sort((x, y) => x - y);
  const slowP95 = percentile(slow, 95);
  console.log(`\nThe same drag with the CPU slowed ${THROTTLE_RATE}× (Chromium's CPU throttling: a school laptop):`);
  console.log(`  frames measured     ${slow.length} over ${DRAG_SECONDS} s`);
  console.log(`  frame time p50      ${percentile(slow, 50).toFixed(1)} ms`);
  console.log(
    `  frame time p95      ${slowP95.toFixed(1)} ms   (goal ≤ ${GOAL_THROTTLED_P95_MS.toFixed(1)} ms: 30 fps) ${slowP95 <= GOAL_THROTTLED_P95_MS + 0.5 ? 'met' : 'NOT met'}   [unthrottled p95 ${p95.toFixed(1)} ms, ratio ${(slowP95 / GOAL_THROTTLED_P95_MS).toFixed(2)} of the goal]`,
  );
  const [load1] = loadavg();
  console.log(`  Frame times include the machine’s own jitter and whatever else it runs (load average ${load1!.toFixed(1)} on ${cpus().length} cores during this run); run twice to see the spread.`);
}

await main();
