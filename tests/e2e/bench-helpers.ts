/** Driving the bench in a browser the way a student does: by role and accessible name. */
import { eq } from 'drizzle-orm';
import type { Page } from 'playwright-core';
import { expect } from 'vitest';
import { assignments, classes, enrollments, scenarios, users } from '../../server/db/schema.ts';
import type { ReadingQuantity } from '../../shared/api/attempts.ts';
import { TEST_SETUPS } from '../../shared/test-setups.ts';
import type { DiagnosticTest } from '../../sim/faults.ts';
import type { E2eServer } from './support.ts';

/** Assigns a library scenario (by its slug) to the class of the given student, open now. */
export async function assignToStudent(app: E2eServer, slug: string, studentEmail: string, title: string): Promise<number> {
  const db = app.server.ctx.db;
  const [scenario] = await db.select({ versionId: scenarios.publishedVersionId }).from(scenarios).where(eq(scenarios.slug, slug));
  if (!scenario?.versionId) throw new Error(`no published scenario ${slug}`);
  const [student] = await db.select({ id: users.id }).from(users).where(eq(users.email, studentEmail));
  if (!student) throw new Error(`no student ${studentEmail}`);
  const [enrolled] = await db.select({ classId: enrollments.classId }).from(enrollments).innerJoin(classes, eq(classes.id, enrollments.classId)).where(eq(enrollments.userId, student.id));
  if (!enrolled) throw new Error(`${studentEmail} is in no class`);
  const now = Date.now();
  const [row] = await db
    .insert(assignments)
    .values({ classId: enrolled.classId, scenarioVersionId: scenario.versionId, title, opensAt: new Date(now - 3600_000), dueAt: new Date(now + 7 * 86400_000), attemptsAllowed: 5 })
    .returning({ id: assignments.id });
  return row!.id;
}

export async function scenarioIdOf(app: E2eServer, slug: string): Promise<number> {
  const [row] = await app.server.ctx.db.select({ id: scenarios.id }).from(scenarios).where(eq(scenarios.slug, slug));
  if (!row) throw new Error(`no scenario ${slug}`);
  return row.id;
}

/** Opens a start link and waits for the live bench; returns the attempt id from the address. */
export async function openBench(page: Page, baseUrl: string, query: string): Promise<number> {
  await page.goto(`${baseUrl}/bench/new?${query}`);
  await page.waitForURL(/\/bench\/\d+$/);
  await page.getByRole('slider', { name: 'Carbon pile load' }).waitFor();
  return Number(new URL(page.url()).pathname.split('/').pop());
}

export const reading = async (page: Page, id: 'volts' | 'amps' | 'rpm' | 'ripple' | 'draw'): Promise<number> => {
  const text = (await page.getByTestId(`reading-${id}`).textContent()) ?? '';
  return Number(text.replace('\u2212', '-').replace(/,/g, ''));
};

/** The bench time, in ms, of the display tick the readouts show now. */
export const shownAtMs = async (page: Page): Promise<number> => Number(await page.getByTestId('reading-strip').getAttribute('data-at-ms'));

/**
 * Waits until the readouts show a display tick at least `ms` of bench time
 * later than the one they show now: what a change needs to reach the meters,
 * however little bench time a busy machine gives each real second.
 */
export async function letReadoutsMoveOn(page: Page, ms: number): Promise<void> {
  const from = await shownAtMs(page);
  await expect.poll(() => shownAtMs(page), { timeout: 30_000 }).toBeGreaterThanOrEqual(from + ms);
}

/** Bench time the readouts are given to follow one turn of the pile's dial (three display ticks). */
export const DIAL_SETTLE_MS = 300;

/** Turns the pile's dial by one key press and waits until the readouts show the load it gives. */
export async function turnDial(page: Page, key: 'ArrowUp' | 'PageUp' | 'ArrowDown' | 'PageDown'): Promise<void> {
  await page.keyboard.press(key);
  await letReadoutsMoveOn(page, DIAL_SETTLE_MS);
}

/** Opens one of the bench's side panels (Procedure, Hook-up, Car, Readings, Charts, Diagnose). */
export async function openPanel(page: Page, name: 'Procedure' | 'Hook-up' | 'Car' | 'Readings' | 'Charts' | 'Diagnose'): Promise<void> {
  const tab = page.getByRole('tablist', { name: 'Bench panels' }).getByRole('tab', { name: new RegExp(`^${name}`) });
  if ((await tab.getAttribute('aria-selected')) !== 'true') await tab.click();
}

/** Switches a vehicle accessory on or off from the Car panel. */
export async function toggleAccessory(page: Page, label: string): Promise<void> {
  await openPanel(page, 'Car');
  await page.getByRole('button', { name: label, exact: true }).click();
}

export async function hookUp(page: Page, opts: { red?: string; black?: string; clamp?: string }): Promise<void> {
  await openPanel(page, 'Hook-up');
  if (opts.red) await page.getByLabel('Red lead', { exact: true }).selectOption(opts.red);
  if (opts.black) await page.getByLabel('Black lead', { exact: true }).selectOption(opts.black);
  if (opts.clamp) await page.getByLabel('Inductive clamp', { exact: true }).selectOption(opts.clamp);
}

export async function startEngine(page: Page): Promise<void> {
  await page.getByRole('button', { name: 'Start', exact: true }).click();
  await expect.poll(() => reading(page, 'rpm'), { timeout: 15_000 }).toBeGreaterThan(500);
  await expect.poll(async () => page.getByRole('button', { name: 'Key on' }).getAttribute('aria-pressed'), { timeout: 10_000 }).toBe('true');
}

export async function holdRpm(page: Page, label: '1,500' | '2,000' | '2,500' | 'Idle'): Promise<void> {
  await page.getByRole('button', { name: label, exact: true }).click();
}

/** Turns the pile up from the keyboard until the voltmeter reads at or below `volts`. */
export async function loadDownTo(page: Page, volts: number): Promise<void> {
  const dial = page.getByRole('slider', { name: 'Carbon pile load' });
  await dial.focus();
  for (let i = 0; i < 100; i++) {
    if ((await reading(page, 'volts')) <= volts) return;
    await turnDial(page, (await reading(page, 'volts')) > volts + 0.6 ? 'PageUp' : 'ArrowUp');
  }
  throw new Error(`could not load the system down to ${volts} V`);
}

/**
 * Records a reading for `test` with the record bar. Each test reads one
 * quantity (shared/test-setups.ts); `quantity` is the one the caller means to
 * record, checked against the test's. With `inSetup`, first waits until the
 * bar says the test's set-up holds.
 */
export async function recordReading(page: Page, test: DiagnosticTest, quantity: ReadingQuantity = TEST_SETUPS[test].quantity, opts: { inSetup?: boolean } = {}): Promise<void> {
  expect(TEST_SETUPS[test].quantity).toBe(quantity);
  const form = page.getByRole('form', { name: 'Record a reading' });
  if (opts.inSetup) await awaitSetup(page, test);
  else await form.getByLabel('Test').selectOption(test);
  const before = await page.getByTestId('recorded-reading').count();
  await form.getByRole('button', { name: 'Record this reading' }).click();
  await expect.poll(() => page.getByTestId('recorded-reading').count()).toBe(before + 1);
}

/**
 * Chooses `test` in the record bar and waits until the bar says its set-up
 * holds (shared/test-setups.ts: the conditions, held their time), so a
 * reading taken next counts.
 */
export async function awaitSetup(page: Page, test: DiagnosticTest): Promise<void> {
  const form = page.getByRole('form', { name: 'Record a reading' });
  await form.getByLabel('Test').selectOption(test);
  await expect.poll(() => page.getByTestId('setup-status').textContent(), { timeout: 30_000 }).toMatch(/^Set-up holds/);
}

export async function diagnose(page: Page, verdicts: Record<string, 'Pass' | 'Fail'>, fault: string): Promise<void> {
  await openPanel(page, 'Diagnose');
  const form = page.getByRole('form', { name: 'Diagnosis' });
  for (const [test, verdict] of Object.entries(verdicts)) {
    await form.getByRole('radiogroup', { name: test }).getByLabel(verdict, { exact: true }).check();
  }
  await form.getByLabel('Fault found').selectOption({ label: fault });
  await form.getByRole('button', { name: 'Submit diagnosis' }).click();
  await page.getByTestId('attempt-result').waitFor({ timeout: 60_000 });
}

/** The attempt as the server holds it (its stored events), through the student's own session. */
export async function serverAttempt(page: Page, attemptId: number): Promise<{ events: { seq: number; event: { kind: string; atMs: number } }[]; attempt: { lastSeq: number; status: string } }> {
  return page.evaluate(async (id) => (await (await fetch(`/api/attempts/${id}`)).json()) as never, attemptId);
}
