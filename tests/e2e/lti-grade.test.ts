/**
 * A course on a learning platform, end to end in Chromium, against the local
 * platform: the admin registers it, an instructor adds a Loadline activity by
 * deep linking, a learner launches into it, runs the output test and submits
 * while the platform is down; the grade waits in the outbox, is retried, and
 * lands in the platform's gradebook once it is back. The instructor then
 * opens the activity framed in the course page and sees the grade sent.
 */
import { eq } from 'drizzle-orm';
import { afterAll, describe, expect, it } from 'vitest';
import { demoFirst } from '../../server/db/demo-people.ts';
import { assignments, attempts, scenarios } from '../../server/db/schema.ts';
import { startLocalPlatform, type LocalPlatform } from '../../server/lti/local-platform.ts';
import { ltiScoreOutbox } from '../../server/lti/tables.ts';
import { diagnose, holdRpm, hookUp, loadDownTo, reading, recordReading, startEngine } from './bench-helpers.ts';
import { SCREENSHOT_DIR } from './browser.ts';
import { browserAndServerForFile, signInAs, watchConsole } from './support.ts';

// Quick retries, so the test sees one fail and the next succeed.
const e2e = browserAndServerForFile({ LTI_OUTBOX_POLL_MS: '250', LTI_RETRY_BASE_MS: '1500' });
let platform: LocalPlatform | undefined;

afterAll(async () => {
  await platform?.close();
});

describe('grades through the learning platform', () => {
  it('registers the platform, places an activity, launches a learner who submits while the platform is down, and the gradebook gets the score', async () => {
    platform = await startLocalPlatform({ toolUrl: e2e.app.url });
    const db = e2e.app.server.ctx.db;

    // 1. The admin registers the platform with the values its admin gave.
    const admin = await e2e.browser.newPage({ viewport: { width: 1280, height: 1000 } });
    const adminProblems = watchConsole(admin);
    await signInAs(admin, e2e.app.url, demoFirst('admin').email);
    await admin.getByRole('link', { name: 'Platforms' }).click();
    await admin.getByRole('heading', { name: 'Learning platforms' }).waitFor();
    const values = admin.locator('dl[aria-label="Values for the platform"]');
    expect(await values.textContent()).toContain(`${e2e.app.url}/lti/login`);
    const reg = platform.registration();
    const form = admin.getByRole('form', { name: 'Register a platform' });
    await form.getByLabel('Name (shown to instructors)').fill(reg.name);
    await form.getByLabel('Issuer').fill(reg.issuer);
    await form.getByLabel('Client id (the platform gave Loadline)').fill(reg.clientId);
    await form.getByLabel('Authorisation (OIDC auth) address').fill(reg.authUrl);
    await form.getByLabel('Token address').fill(reg.tokenUrl);
    await form.getByLabel('Public key set (JWKS) address').fill(reg.jwksUrl);
    await form.getByLabel('Deployment ids').fill(reg.deploymentIds.join('\n'));
    await form.getByRole('button', { name: 'Register the platform' }).click();
    await admin.getByTestId('platform').filter({ hasText: 'Quillmoor' }).waitFor();
    await admin.screenshot({ path: `${SCREENSHOT_DIR}/lti-admin-platforms.png`, fullPage: true });
    expect(adminProblems).toEqual([]);
    await admin.close();

    // 2. The instructor adds a Loadline activity from the course (deep linking).
    const teacher = await e2e.browser.newPage({ viewport: { width: 1280, height: 900 } });
    const teacherProblems = watchConsole(teacher);
    await teacher.goto(platform.launchUrl({ user: 'qm-teacher-ilse', deepLink: true }));
    await teacher.getByRole('heading', { name: 'Add a Loadline activity' }).waitFor();
    const [scenario] = await db.select({ id: scenarios.id }).from(scenarios).where(eq(scenarios.slug, 'healthy-control-corvane-linden'));
    const pick = teacher.getByRole('form', { name: 'Add a Loadline activity' });
    await pick.getByLabel('Scenario (its published version)').selectOption(String(scenario!.id));
    await pick.getByLabel('Title in the course (optional)').fill('Output test on the Linden');
    await pick.getByLabel('Attempts allowed').fill('2');
    await teacher.screenshot({ path: `${SCREENSHOT_DIR}/lti-deep-link-picker.png`, fullPage: true });
    await pick.getByRole('button', { name: 'Add to the course' }).click();
    await teacher.waitForURL(`${platform.url}/deep-link-return`);
    await teacher.getByRole('heading', { name: 'Activity added' }).waitFor();
    expect(teacherProblems).toEqual([]);
    const link = [...platform.links.values()].at(-1)!;
    expect(link.title).toBe('Output test on the Linden');
    expect(link.lineItemId).not.toBeNull();

    // 3. The learner launches into the activity, straight onto a new attempt's bench.
    const student = await e2e.browser.newPage({ viewport: { width: 1360, height: 900 } });
    const studentProblems = watchConsole(student);
    await student.goto(platform.launchUrl({ user: 'qm-learner-wren', link: link.id }));
    await student.waitForURL(/\/bench\/\d+$/);
    await student.getByRole('slider', { name: 'Carbon pile load' }).waitFor();
    const attemptId = Number(new URL(student.url()).pathname.split('/').pop());

    // Leads on the posts; the clamp zeroed with its jaws away from any cable, then closed on B+ (the output test's set-up).
    await hookUp(student, { red: 'battery-pos', black: 'battery-neg' });
    await student.getByRole('button', { name: 'Zero clamp' }).click();
    await student.getByLabel('Inductive clamp', { exact: true }).selectOption('bplus-cable');
    await startEngine(student);
    await holdRpm(student, '2,000');
    await expect.poll(() => reading(student, 'rpm'), { timeout: 10_000 }).toBeGreaterThanOrEqual(1950);
    // The engine runs a while before a loaded test: let a minute pass on the bench.
    await student.getByRole('button', { name: 'Let 1 min pass on the bench' }).click();
    await loadDownTo(student, 12.05);
    expect(await reading(student, 'amps')).toBeGreaterThanOrEqual(135);
    await recordReading(student, 'output', 'current', { inSetup: true });
    await student.getByRole('button', { name: 'Load off' }).click();

    // The platform goes down just before the submission: the first post of the grade fails.
    await platform.stop();
    await diagnose(student, { 'Output test under carbon-pile load': 'Pass' }, 'No fault: the charging system is healthy');
    const shown = (await student.getByTestId('result-grade').textContent()) ?? '';
    const grade = Number(/^(\d+) \/ 100$/.exec(shown)?.[1]);
    expect(grade).toBeGreaterThan(0);
    await student.screenshot({ path: `${SCREENSHOT_DIR}/lti-learner-result.png`, fullPage: true });
    expect(studentProblems).toEqual([]);

    await expect
      .poll(async () => (await db.select().from(ltiScoreOutbox).where(eq(ltiScoreOutbox.attemptId, attemptId)))[0]?.tries ?? 0, { timeout: 15_000 })
      .toBeGreaterThanOrEqual(1);
    const [waiting] = await db.select().from(ltiScoreOutbox).where(eq(ltiScoreOutbox.attemptId, attemptId));
    expect(waiting).toMatchObject({ status: 'pending' });
    expect(waiting!.lastError).toMatch(/could not be reached/);
    expect(platform.gradebook()).toEqual([]);

    // The instructor (still signed in from the course) sees the grade waiting on the comparison, with the error.
    const [attempt] = await db.select({ assignmentId: attempts.assignmentId }).from(attempts).where(eq(attempts.id, attemptId));
    await teacher.goto(`${e2e.app.url}/assignments/${attempt!.assignmentId}/compare`);
    const panel = teacher.locator('section').filter({ hasText: 'Grades sent to Quillmoor' });
    await panel.getByTestId('grade-sync-status').filter({ hasText: 'pending' }).waitFor();
    await teacher.screenshot({ path: `${SCREENSHOT_DIR}/lti-grade-waiting.png`, fullPage: true });

    // 4. The platform is back: the retry lands the score in its gradebook.
    await platform.start();
    await expect.poll(() => platform!.gradebook().length, { timeout: 30_000 }).toBe(1);
    const [entry] = platform.gradebook();
    expect(entry).toMatchObject({ userId: 'qm-learner-wren', scoreGiven: grade, scoreMaximum: 100, lineItemId: link.lineItemId });
    expect(entry!.comment).toMatch(/Fault named: No fault: the charging system is healthy \(correct\)/);
    // The platform records the score before Loadline hears its answer and marks the row sent.
    await expect
      .poll(async () => (await db.select().from(ltiScoreOutbox).where(eq(ltiScoreOutbox.attemptId, attemptId)))[0]?.status, { timeout: 15_000 })
      .toBe('sent');
    const [sent] = await db.select().from(ltiScoreOutbox).where(eq(ltiScoreOutbox.attemptId, attemptId));
    expect(sent!.tries).toBeGreaterThanOrEqual(2);
    await panel.getByTestId('grade-sync-status').filter({ hasText: 'sent' }).waitFor({ timeout: 15_000 });

    const course = await e2e.browser.newPage({ viewport: { width: 1280, height: 800 } });
    await course.goto(`${platform.url}/`);
    expect(await course.getByTestId('gradebook').textContent()).toContain(`${grade} / 100`);
    await course.screenshot({ path: `${SCREENSHOT_DIR}/lti-platform-gradebook.png`, fullPage: true });

    // 5. Framed in the course page: the instructor's launch lands on the comparison inside the frame.
    const framed = await e2e.browser.newPage({ viewport: { width: 1360, height: 1000 } });
    const framedProblems = watchConsole(framed);
    await framed.goto(platform.launchUrl({ user: 'qm-teacher-ilse', link: link.id, frame: true }));
    const inner = framed.frameLocator('iframe[title="Loadline"]');
    await inner.getByText('Grades sent to Quillmoor').waitFor({ timeout: 30_000 });
    await inner.getByTestId('grade-sync-status').filter({ hasText: 'sent' }).waitFor();
    await framed.screenshot({ path: `${SCREENSHOT_DIR}/lti-framed-instructor.png`, fullPage: true });
    expect(framedProblems).toEqual([]);

    // 6. The class page syncs its members from the course: the two learners and the teaching assistant who never launched join it.
    await teacher.goto(`${e2e.app.url}/classes/${await classOf(attempt!.assignmentId!)}`);
    const roster = teacher.locator('section').filter({ hasText: 'Roster from Quillmoor' });
    await roster.getByRole('button', { name: 'Sync members from the platform' }).click();
    await expect.poll(async () => (await roster.getByRole('status').textContent()) ?? '', { timeout: 15_000 }).toMatch(/3 added \(Milo Ferrant, Juno Castellaw, Osric Penhallow\), 0 updated, 0 gone, 2 unchanged/);
    // The students table names each student with their e-mail under the name.
    await teacher.getByRole('cell').filter({ hasText: 'Juno Castellaw' }).first().waitFor();
    await teacher.screenshot({ path: `${SCREENSHOT_DIR}/lti-class-roster-sync.png`, fullPage: true });
    expect(teacherProblems).toEqual([]);

    // A refused launch shows a page that says what went wrong.
    const refused = await e2e.browser.newPage({ viewport: { width: 1000, height: 600 } });
    const answer = await refused.goto(`${e2e.app.url}/lti/enter?token=spent-or-made-up`);
    expect(answer?.status()).toBe(400);
    expect(await refused.getByTestId('lti-refusal').textContent()).toMatch(/used or has expired/);
    await refused.screenshot({ path: `${SCREENSHOT_DIR}/lti-refusal.png`, fullPage: true });
    await Promise.all([teacher.close(), student.close(), course.close(), framed.close(), refused.close()]);
  });
});

async function classOf(assignmentId: number): Promise<number> {
  const [row] = await e2e.app.server.ctx.db.select({ classId: assignments.classId }).from(assignments).where(eq(assignments.id, assignmentId));
  return row!.classId;
}
