import { describe, expect, it } from 'vitest';
import { DEMO_PEOPLE } from '../../server/db/demo-people.ts';
import { SCREENSHOT_DIR } from './browser.ts';
import { browserAndServerForFile, signInAs, watchConsole } from './support.ts';

const e2e = browserAndServerForFile();

const expectedNav = {
  student: ['Bench', 'My attempts', 'Progress'],
  instructor: ['Scenarios', 'Classes'],
  admin: ['Users', 'Classes', 'Scenarios', 'Platforms', 'Outbox'],
} as const;

const startPageTitle = { student: 'Bench', instructor: 'Scenario library', admin: 'Users' } as const;

describe('signing in as each role', () => {
  for (const role of ['student', 'instructor', 'admin'] as const) {
    it(`shows a ${role} their own navigation`, async () => {
      const person = DEMO_PEOPLE.find((p) => p.role === role)!;
      const page = await e2e.browser.newPage({ viewport: { width: 1280, height: 800 } });
      const problems = watchConsole(page);
      await signInAs(page, e2e.app.url, person.email);
      const nav = page.getByRole('navigation', { name: 'Main' });
      await expect.poll(() => nav.getByRole('link').allTextContents(), { timeout: 20_000 }).toEqual([...expectedNav[role]]);
      await expect.poll(() => page.getByRole('heading', { level: 1 }).first().textContent(), { timeout: 20_000 }).toBe(startPageTitle[role]);
      await page.screenshot({ path: `${SCREENSHOT_DIR}/sign-in-${role}.png`, fullPage: true });
      expect(problems).toEqual([]);
      await page.getByRole('button', { name: 'Sign out' }).click();
      await page.waitForURL(/\/sign-in/);
      await page.close();
    });
  }

  it('lets an admin open every class and the scenario library from the menu', async () => {
    const page = await e2e.browser.newPage({ viewport: { width: 1280, height: 800 } });
    const problems = watchConsole(page);
    await signInAs(page, e2e.app.url, DEMO_PEOPLE.find((p) => p.role === 'admin')!.email);
    const nav = page.getByRole('navigation', { name: 'Main' });
    await nav.getByRole('link', { name: 'Classes' }).click();
    await page.waitForURL(/\/classes$/);
    // Both demo classes, though the admin teaches neither.
    await expect.poll(() => page.getByRole('link', { name: /Charging Systems/ }).count(), { timeout: 20_000 }).toBeGreaterThanOrEqual(2);
    expect(await page.getByText('Every section of the school').count()).toBe(1);
    await page.screenshot({ path: `${SCREENSHOT_DIR}/admin-classes.png`, fullPage: true });
    await nav.getByRole('link', { name: 'Scenarios' }).click();
    await expect.poll(() => page.getByRole('heading', { level: 1 }).first().textContent(), { timeout: 20_000 }).toBe('Scenario library');
    expect(problems).toEqual([]);
    await page.close();
  });

  it('shows an error for a wrong password and keeps the user on the sign-in page', async () => {
    const page = await e2e.browser.newPage();
    await page.goto(`${e2e.app.url}/sign-in`);
    await page.getByLabel('E-mail').fill(DEMO_PEOPLE[0]!.email);
    await page.getByLabel('Password').fill('definitely-wrong');
    await page.getByRole('button', { name: 'Sign in' }).click();
    await expect.poll(() => page.getByRole('alert').first().textContent()).toMatch(/not right/);
    expect(new URL(page.url()).pathname).toBe('/sign-in');
    await page.close();
  });

  it('sends a signed-out visitor to sign-in and shows a 404 page for unknown addresses', async () => {
    const page = await e2e.browser.newPage();
    await page.goto(`${e2e.app.url}/admin/users`);
    await page.waitForURL(/\/sign-in\?next=/);
    await signInAs(page, e2e.app.url, DEMO_PEOPLE.find((p) => p.role === 'student')!.email);
    await page.goto(`${e2e.app.url}/no/such/page`);
    await expect.poll(() => page.getByRole('heading', { level: 1 }).textContent()).toMatch(/nothing at this address/);
    await page.screenshot({ path: `${SCREENSHOT_DIR}/not-found.png` });
    await page.close();
  });
});
