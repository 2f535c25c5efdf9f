import { createServer as createNetServer, type AddressInfo } from 'node:net';
import { randomBytes } from 'node:crypto';
import { fileURLToPath } from 'node:url';
import type { Browser, Page } from 'playwright-core';
import { afterAll, beforeAll } from 'vitest';
import { readEnv } from '../../server/env.ts';
import { startServer, type RunningServer } from '../../server/main.ts';
import { startSmtpFake, type SmtpFake } from '../../server/mail/smtp-fake.ts';
import { connect } from '../../server/db/client.ts';
import { DEMO_PASSWORD } from '../../server/db/demo-people.ts';
import { createTestDatabase } from '../server/support.ts';
import { launchBrowser } from './browser.ts';

const distDir = fileURLToPath(new URL('../../dist', import.meta.url));

export interface E2eServer {
  server: RunningServer;
  url: string;
  close(): Promise<void>;
}

/** A port free on the loopback address now. */
function freePort(): Promise<number> {
  return new Promise((resolve, reject) => {
    const probe = createNetServer();
    probe.once('error', reject);
    probe.listen(0, '127.0.0.1', () => {
      const { port } = probe.address() as AddressInfo;
      probe.close(() => resolve(port));
    });
  });
}

/** The built client and the API on a fresh copy of the demo database. */
export async function startE2eServer(env: Record<string, string> = {}): Promise<E2eServer> {
  const databaseUrl = await createTestDatabase();
  const mailDb = connect(databaseUrl, 2);
  const smtp: SmtpFake = await startSmtpFake(mailDb.db, 0);
  // Listen where the public address says (launches from a learning platform name it as their target).
  const port = await freePort();
  const server = await startServer({
    // Production, as `npm start` runs it: a secret of its own, and a public address (the browser tests open no mailed link).
    env: readEnv({
      NODE_ENV: 'production',
      DATABASE_URL: databaseUrl,
      PORT: String(port),
      SMTP_PORT: String(smtp.port),
      PUBLIC_URL: `http://127.0.0.1:${port}`,
      SESSION_SECRET: randomBytes(32).toString('hex'),
      ...env,
    }),
    staticDir: distDir,
    logLevel: 'silent',
  });
  return {
    server,
    url: server.url,
    async close() {
      await server.close();
      await smtp.close();
      await mailDb.close();
    },
  };
}

/** Collects console errors and CSP violations, which fail a test. */
export function watchConsole(page: Page): string[] {
  const problems: string[] = [];
  page.on('console', (m) => {
    if (m.type() === 'error') problems.push(m.text());
  });
  page.on('pageerror', (e) => problems.push(String(e)));
  return problems;
}

export async function signInAs(page: Page, baseUrl: string, email: string, password = DEMO_PASSWORD): Promise<void> {
  await page.goto(`${baseUrl}/sign-in`);
  await page.getByLabel('E-mail').fill(email);
  await page.getByLabel('Password').fill(password);
  await page.getByRole('button', { name: 'Sign in' }).click();
  await page.waitForURL((u) => !u.pathname.startsWith('/sign-in'));
}

/** A browser and a demo server for one test file: both start before its tests and close after them. */
export function browserAndServerForFile(env: Record<string, string> = {}): { readonly browser: Browser; readonly app: E2eServer } {
  const held: { browser?: Browser; app?: E2eServer } = {};
  beforeAll(async () => {
    [held.browser, held.app] = await Promise.all([launchBrowser(), startE2eServer(env)]);
  });
  afterAll(async () => {
    await held.browser?.close();
    await held.app?.close();
  });
  return {
    get browser() {
      if (!held.browser) throw new Error('the browser starts in beforeAll');
      return held.browser;
    },
    get app() {
      if (!held.app) throw new Error('the server starts in beforeAll');
      return held.app;
    },
  };
}
