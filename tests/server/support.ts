/**
 * Integration-test support: each test file gets its own copy of the migrated,
 * seeded template database, an app built on it, and a local mail fake.
 */
import { randomBytes } from 'node:crypto';
import { eq } from 'drizzle-orm';
import pg from 'pg';
import supertest from 'supertest';
import type TestAgent from 'supertest/lib/agent.js';
import { createApp } from '../../server/app.ts';
import type { AppContext } from '../../server/context.ts';
import { outbox } from '../../server/db/schema.ts';
import { DEMO_PASSWORD } from '../../server/db/demo-people.ts';
import { readEnv, type Env } from '../../server/env.ts';
import { buildContext } from '../../server/main.ts';
import { startSmtpFake, type SmtpFake } from '../../server/mail/smtp-fake.ts';

export { DEMO_PASSWORD };

function baseUrl(): string {
  const url = process.env.LOADLINE_TEST_PG;
  if (!url) throw new Error('LOADLINE_TEST_PG is not set: run the integration tests through `npm test`');
  return url;
}

export async function createTestDatabase(): Promise<string> {
  const name = `t_${randomBytes(6).toString('hex')}`;
  const template = process.env.LOADLINE_TEST_TEMPLATE ?? 'loadline_template';
  const admin = new pg.Client({ connectionString: `${baseUrl()}postgres` });
  await admin.connect();
  try {
    // Copies from one template cannot overlap: retry while another copy holds it.
    for (let attempt = 0; ; attempt++) {
      try {
        await admin.query(`create database ${name} template ${template}`);
        break;
      } catch (err) {
        if (attempt > 50 || !/being accessed by other users/.test((err as Error).message)) throw err;
        await new Promise((r) => setTimeout(r, 100 + Math.random() * 200));
      }
    }
  } finally {
    await admin.end();
  }
  return `${baseUrl()}${name}`;
}

export interface TestApp {
  app: ReturnType<typeof createApp>['app'];
  routes: ReturnType<typeof createApp>['routes'];
  ctx: AppContext;
  env: Env;
  smtp: SmtpFake;
  databaseUrl: string;
  close(): Promise<void>;
}

/** Limits raised for the tests, which sign in, reset, start and submit far more often than a class does. */
export const TEST_LIMITS = {
  SIGN_IN_FAILURES_PER_ACCOUNT: '1000',
  SIGN_IN_FAILURES_PER_ADDRESS: '100000',
  RESET_REQUESTS_PER_ADDRESS: '1000',
  RESET_REQUESTS_PER_EMAIL: '1000',
  SET_PASSWORD_FAILURES_PER_ADDRESS: '1000',
  PRACTICE_STARTS_PER_HOUR: '10000',
  SUBMISSIONS_PER_HOUR: '10000',
} as const satisfies Partial<Record<keyof Env, string>>;

export async function startTestApp(overrides: Partial<Record<keyof Env, string>> = {}, databaseUrl?: string): Promise<TestApp> {
  const url = databaseUrl ?? (await createTestDatabase());
  const probe = buildContext(readEnv({ DATABASE_URL: url }), 'silent');
  const smtp = await startSmtpFake(probe.db, 0);
  // A test signs in, starts and submits far more often than a student does; the tests of those limits set their own.
  const env = readEnv({ NODE_ENV: 'test', DATABASE_URL: url, SMTP_PORT: String(smtp.port), ...TEST_LIMITS, ...overrides });
  const ctx = buildContext(env, 'silent');
  const { app, routes } = createApp(ctx);
  return {
    app,
    routes,
    ctx,
    env,
    smtp,
    databaseUrl: url,
    async close() {
      await smtp.close();
      await ctx.closeDb();
      await probe.closeDb();
    },
  };
}

export type Agent = TestAgent & { csrf: string };

/** A cookie-keeping client that has fetched its CSRF token. */
export async function anonymousAgent(app: TestApp['app']): Promise<Agent> {
  const agent = supertest.agent(app) as Agent;
  const me = await agent.get('/api/auth/me').expect(200);
  agent.csrf = me.body.csrfToken as string;
  agent.set('X-CSRF-Token', agent.csrf);
  return agent;
}

export async function signIn(app: TestApp['app'], email: string, password = DEMO_PASSWORD): Promise<Agent> {
  const agent = await anonymousAgent(app);
  const res = await agent.post('/api/auth/sign-in').send({ email, password });
  if (res.status !== 200) throw new Error(`sign-in of ${email} failed: ${res.status} ${JSON.stringify(res.body)}`);
  agent.csrf = res.body.csrfToken as string;
  agent.set('X-CSRF-Token', agent.csrf);
  return agent;
}

/** Waits for a message to a recipient to reach the mail fake's outbox. */
export async function waitForMail(ctx: AppContext, to: string, timeoutMs = 5_000): Promise<{ subject: string; body: string }> {
  const until = Date.now() + timeoutMs;
  for (;;) {
    const rows = await ctx.db.select({ subject: outbox.subject, body: outbox.body }).from(outbox).where(eq(outbox.toAddress, to));
    const last = rows.at(-1);
    if (last) return last;
    if (Date.now() > until) throw new Error(`no mail reached ${to}`);
    await new Promise((r) => setTimeout(r, 50));
  }
}

export const linkToken = (body: string): string => {
  const m = /token=([A-Za-z0-9_%-]+)/.exec(body);
  if (!m?.[1]) throw new Error('no token link in mail');
  return decodeURIComponent(m[1]);
};
