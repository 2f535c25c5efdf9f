/**
 * An axe-core scan of every page each role can reach, with the states a page
 * shows in use (every panel of the bench, a submitted result, a dialog open,
 * a page that does not exist): zero violations of axe's rules (WCAG 2.0, 2.1
 * and 2.2 A and AA, and its best practices such as one main landmark and no
 * skipped heading level). Every scan also runs on a phone where the page
 * changes shape there (tables become cards).
 */
import { createRequire } from 'node:module';
import { readFileSync } from 'node:fs';
import { eq } from 'drizzle-orm';
import type { BrowserContext, Page } from 'playwright-core';
import { describe, expect, it } from 'vitest';
import { DEMO_PEOPLE, demoFirst } from '../../server/db/demo-people.ts';
import { assignments, classInstructors, users } from '../../server/db/schema.ts';
import { SCREENSHOT_DIR } from './browser.ts';
import { assignToStudent, hookUp, openBench, openPanel, scenarioIdOf } from './bench-helpers.ts';
import { browserAndServerForFile, signInAs, watchConsole } from './support.ts';

const e2e = browserAndServerForFile();
const AXE_SOURCE = readFileSync(createRequire(import.meta.url).resolve('axe-core/axe.min.js'), 'utf8');

interface Finding {
  page: string;
  rule: string;
  impact: string | null;
  help: string;
  targets: string[];
}

/** Runs axe on the page as it is now; the page's own content security policy does not apply to evaluated code. */
async function scan(page: Page, label: string): Promise<Finding[]> {
  // Wait for the page to settle on what it shows: no spinner left.
  await expect.poll(() => page.locator('[role="status"]:has(svg.animate-spin)').count(), { timeout: 15_000 }).toBe(0);
  const { passes, violations } = (await page.evaluate(`(async () => {
    if (!window.axe) { ${AXE_SOURCE}\n }
    const r = await window.axe.run(document, { resultTypes: ['violations'] });
    return {
      passes: r.passes.length,
      violations: r.violations.map((v) => ({ id: v.id, impact: v.impact, help: v.help, targets: v.nodes.slice(0, 5).map((n) => n.target.join(' ')) })),
    };
  })()`)) as { passes: number; violations: { id: string; impact: string | null; help: string; targets: string[] }[] };
  // The scan ran: rules were checked against this page (a page axe could not read would pass nothing).
  expect(passes, label).toBeGreaterThan(10);
  return violations.map((v) => ({ page: label, rule: v.id, impact: v.impact, help: v.help, targets: v.targets }));
}

/** Opens a page and scans it once its main heading is there. */
async function visit(page: Page, url: string, label: string): Promise<Finding[]> {
  await page.goto(`${e2e.app.url}${url}`);
  await page.locator('h1').first().waitFor({ timeout: 20_000 });
  // The page asked for, not a redirect to another (the sign-in page, a role's start page).
  const at = new URL(page.url());
  expect(at.pathname + at.search, label).toBe(url);
  return scan(page, label);
}

async function roleContext(email: string | null, phone = false): Promise<{ context: BrowserContext; page: Page; problems: string[] }> {
  const context = await e2e.browser.newContext(phone ? { viewport: { width: 390, height: 844 }, isMobile: true, hasTouch: true } : { viewport: { width: 1366, height: 768 } });
  const page = await context.newPage();
  const problems = watchConsole(page);
  if (email) await signInAs(page, e2e.app.url, email);
  return { context, page, problems };
}

/** What the demo school offers these tests: an assignment of one student, its class, its instructor and the student's submitted attempt. */
interface World {
  student: { email: string; id: number };
  instructorEmail: string;
  classId: number;
  assignmentId: number;
  scenarioId: number;
  /** Set once the student has submitted (the student's scan comes first). */
  attemptId: number | null;
}

const world: Partial<World> = {};

async function setUpWorld(): Promise<World> {
  if (world.assignmentId) return world as World;
  const db = e2e.app.server.ctx.db;
  const student = demoFirst('student');
  const assignmentId = await assignToStudent(e2e.app, 'healthy-control-corvane-linden', student.email, 'Accessibility check round');
  const [a] = await db.select({ classId: assignments.classId }).from(assignments).where(eq(assignments.id, assignmentId));
  const [teacher] = await db.select({ email: users.email }).from(classInstructors).innerJoin(users, eq(users.id, classInstructors.userId)).where(eq(classInstructors.classId, a!.classId));
  const [s] = await db.select({ id: users.id }).from(users).where(eq(users.email, student.email));
  Object.assign(world, {
    student: { email: student.email, id: s!.id },
    instructorEmail: teacher?.email ?? DEMO_PEOPLE.find((p) => p.role === 'instructor')!.email,
    classId: a!.classId,
    assignmentId,
    scenarioId: await scenarioIdOf(e2e.app, 'healthy-control-corvane-linden'),
    attemptId: null,
  });
  return world as World;
}

const summary = (findings: Finding[]) => findings.map((f) => `${f.page}: ${f.rule} (${f.impact}) ${f.help} — ${f.targets.join(' | ')}`);

describe('axe finds no violation on any page for any role', () => {
  it('signed out: sign-in, forgot password, set password', async () => {
    const { context, page, problems } = await roleContext(null);
    const findings = [
      ...(await visit(page, '/sign-in', 'sign-in')),
      ...(await visit(page, '/forgot-password', 'forgot password')),
      ...(await visit(page, '/set-password?token=not-a-real-token', 'set password')),
      ...(await visit(page, '/set-password', 'set password without a link')),
    ];
    expect(summary(findings)).toEqual([]);
    expect(problems).toEqual([]);
    await context.close();
  });

  it('a student: the bench in every panel, a submitted result, attempts, replay, progress, and pages that do not exist', async () => {
    const w = await setUpWorld();
    for (const phone of [false, true]) {
      const { context, page, problems } = await roleContext(w.student.email, phone);
      const size = phone ? ' (phone)' : '';
      const findings: Finding[] = [...(await visit(page, '/bench', `bench list${size}`))];
      const attemptId = await openBench(page, e2e.app.url, `assignmentId=${w.assignmentId}`);
      for (const panel of ['Procedure', 'Hook-up', 'Car', 'Readings', 'Charts', 'Diagnose'] as const) {
        await openPanel(page, panel);
        findings.push(...(await scan(page, `bench, ${panel} panel${size}`)));
      }
      if (!phone) {
        // Record one reading, then submit, and scan the result.
        await hookUp(page, { red: 'battery-pos', black: 'battery-neg' });
        await openPanel(page, 'Procedure');
        await page.getByTestId('record-button').click();
        await openPanel(page, 'Readings');
        await expect.poll(() => page.getByTestId('recorded-reading').count(), { timeout: 10_000 }).toBe(1);
        findings.push(...(await scan(page, 'bench, a reading recorded')));
        await openPanel(page, 'Diagnose');
        const form = page.getByRole('form', { name: 'Diagnosis' });
        await form.getByLabel('Fault found').selectOption({ index: 1 });
        await form.getByRole('button', { name: 'Submit diagnosis' }).click();
        const confirm = page.getByRole('dialog');
        await expect.poll(async () => (await page.getByTestId('attempt-result').count()) + (await confirm.count()), { timeout: 60_000 }).toBeGreaterThan(0);
        if ((await confirm.count()) > 0) {
          findings.push(...(await scan(page, 'submit confirmation')));
          await confirm.getByRole('button', { name: /submit/i }).click();
        }
        await page.getByTestId('attempt-result').waitFor({ timeout: 60_000 });
        findings.push(...(await scan(page, 'submitted result')));
        world.attemptId = attemptId;
        await page.screenshot({ path: `${SCREENSHOT_DIR}/a11y-student-result.png`, fullPage: true });
      }
      findings.push(...(await visit(page, '/attempts', `my attempts${size}`)));
      expect(world.attemptId).toBeGreaterThan(0);
      findings.push(...(await visit(page, `/attempts/${world.attemptId}/replay`, `replay${size}`)));
      findings.push(...(await visit(page, '/progress', `progress${size}`)));
      findings.push(...(await visit(page, '/no-such-page', `not found${size}`)));
      findings.push(...(await visit(page, '/bench/999999', `attempt that does not exist${size}`)));
      expect(summary(findings)).toEqual([]);
      expect(problems.filter((p) => !/status of 404/.test(p))).toEqual([]);
      await context.close();
    }
  });

  it('an instructor: scenarios, the editor, a try-out, classes, a class, its live board, the comparison, a student’s progress and replay', async () => {
    const w = await setUpWorld();
    for (const phone of [false, true]) {
      const { context, page, problems } = await roleContext(w.instructorEmail, phone);
      const size = phone ? ' (phone)' : '';
      const findings: Finding[] = [
        ...(await visit(page, '/scenarios', `scenarios${size}`)),
        ...(await visit(page, '/scenarios/new', `new scenario${size}`)),
        ...(await visit(page, `/scenarios/${w.scenarioId}`, `scenario editor${size}`)),
      ];
      const hintsSection = page.locator('[aria-labelledby="section-hints"]');
      await hintsSection.scrollIntoViewIfNeeded();
      await hintsSection.screenshot({ path: `${SCREENSHOT_DIR}/a11y-editor-hints${phone ? '-phone' : ''}.png` });
      findings.push(
        ...(await visit(page, `/scenarios/${w.scenarioId}/try`, `try on the bench${size}`)),
        ...(await visit(page, '/classes', `classes${size}`)),
        ...(await visit(page, `/classes/${w.classId}`, `class${size}`)),
        ...(await visit(page, `/classes/${w.classId}/live`, `live board${size}`)),
        ...(await visit(page, `/assignments/${w.assignmentId}/compare`, `comparison${size}`)),
        ...(await visit(page, `/students/${w.student.id}/progress`, `a student's progress${size}`)),
        ...(await visit(page, '/classes/99999/live', `live board of no class${size}`)),
        ...(await visit(page, '/no-such-page', `not found${size}`)),
      );
      expect(world.attemptId).toBeGreaterThan(0);
      findings.push(...(await visit(page, `/attempts/${world.attemptId}/replay`, `a student's replay${size}`)));
      expect(summary(findings)).toEqual([]);
      expect(problems.filter((p) => !/status of 404/.test(p))).toEqual([]);
      await context.close();
    }
  });

  it('an admin: users (with the confirmation open), the mail outbox, and the instructor pages', async () => {
    const admin = demoFirst('admin');
    for (const phone of [false, true]) {
      const { context, page, problems } = await roleContext(admin.email, phone);
      const size = phone ? ' (phone)' : '';
      const findings: Finding[] = [...(await visit(page, '/admin/users', `users${size}`))];
      // Disabling an account asks first: scan with its dialog open, then cancel.
      await page.getByRole('button', { name: /^Disable / }).first().click();
      const dialog = page.getByRole('dialog');
      await dialog.waitFor();
      findings.push(...(await scan(page, `users, confirmation open${size}`)));
      await dialog.getByRole('button', { name: 'Cancel' }).click();
      await dialog.waitFor({ state: 'hidden' });
      findings.push(...(await visit(page, '/admin/outbox', `mail outbox${size}`)));
      findings.push(...(await visit(page, '/scenarios', `scenarios as admin${size}`)));
      findings.push(...(await visit(page, '/classes', `classes as admin${size}`)));
      expect(summary(findings)).toEqual([]);
      expect(problems).toEqual([]);
      await context.close();
    }
  });
});
