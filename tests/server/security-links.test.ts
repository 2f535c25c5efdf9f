/**
 * Account takeover by a forged link, a known secret or an old link, written
 * as the attacks: a password reset or invitation requested with a forged
 * Host header, a session cookie signed with the secret shipped in the
 * source, production started without a public address or a secret of its
 * own, and a reset link or session that outlives the password it was for.
 *
 * Sources: OWASP Web Security Testing Guide 4.2, WSTG-INPV-17 "Testing for
 * Host Header Injection" (password-reset poisoning); OWASP ASVS 4.0 V2.5.x
 * (credential recovery: tokens single-use and short-lived), V3.3.3 (other
 * sessions end after a password change), V2.10.4 and V6.4.1 (secrets not in
 * source code, generated per installation); from memory.
 */
import { createHmac } from 'node:crypto';
import { mkdtempSync, rmSync, statSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { eq } from 'drizzle-orm';
import supertest from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DEMO_PEOPLE } from '../../server/db/demo-people.ts';
import { outbox, users } from '../../server/db/schema.ts';
import { DEVELOPMENT_SESSION_SECRET, PRODUCTION_SECRET_MIN, readEnv } from '../../server/env.ts';
import { secretFileFor, serverSecret } from '../../scripts/server-secret.ts';
import { instructor, makeClass } from './live-fixtures.ts';
import { anonymousAgent, DEMO_PASSWORD, linkToken, signIn, startTestApp, waitForMail, type TestApp } from './support.ts';

const PUBLIC_URL = 'https://bench.cindervalley.example';
const admin = DEMO_PEOPLE.find((p) => p.role === 'admin')!;
const students = DEMO_PEOPLE.filter((p) => p.role === 'student');

let t: TestApp;
beforeAll(async () => {
  t = await startTestApp({ PUBLIC_URL });
});
afterAll(async () => {
  await t?.close();
});

/** The Host a request names, and the proxy headers a forger adds in case a proxy passes them on. */
const FORGED = { Host: 'evil.example', 'X-Forwarded-Host': 'evil.example', 'X-Forwarded-Proto': 'http' };

/** Every mail sent to the address, oldest first. */
async function mailTo(to: string): Promise<{ subject: string; body: string }[]> {
  await t.ctx.background.settled();
  return t.ctx.db.select({ subject: outbox.subject, body: outbox.body }).from(outbox).where(eq(outbox.toAddress, to)).orderBy(outbox.id);
}

function expectLinkToPublicUrl(body: string): void {
  expect(body).not.toContain('evil.example');
  const links = body.match(/https?:\/\/\S+/g) ?? [];
  expect(links.length).toBeGreaterThan(0);
  for (const link of links) expect(link.startsWith(`${PUBLIC_URL}/`), link).toBe(true);
}

describe('links built from the configured public address only (WSTG-INPV-17)', () => {
  it('mails a reset requested with a forged Host to the real address, and the forger never sees the token', async () => {
    const target = students[0]!.email;
    const anon = await anonymousAgent(t.app);
    // The Origin a browser on the forger's page would not send; a script sending the request itself can forge any header.
    const res = await anon.post('/api/auth/password-reset').set(FORGED).send({ email: target });
    expect(res.status).toBe(202);
    expect(res.text).not.toMatch(/token|evil/);
    const mail = await waitForMail(t.ctx, target);
    expect(mail.body).toMatch(new RegExp(`^${PUBLIC_URL.replace(/\./g, '\\.')}/set-password\\?token=`, 'm'));
    expectLinkToPublicUrl(mail.body);
  });

  it('builds invitations from the public address too: a new user, a re-sent invitation, a class enrolment and a roster', async () => {
    const adminAgent = await signIn(t.app, admin.email);
    await adminAgent.post('/api/users').set(FORGED).send({ email: 'forged.host.one@cindervalley.example', name: 'Ossian Forgewell', role: 'student' }).expect(201);
    const [made] = await t.ctx.db.select({ id: users.id }).from(users).where(eq(users.email, 'forged.host.one@cindervalley.example'));
    await adminAgent.post(`/api/users/${made!.id}/invite`).set(FORGED).expect(202);
    const teacher = await signIn(t.app, instructor.email);
    const fx = await makeClass(t.ctx.db, { students: 0, name: 'Forged host section' });
    await teacher.post(`/api/classes/${fx.classId}/students`).set(FORGED).send({ email: 'forged.host.two@cindervalley.example', name: 'Perrin Hostley' }).expect(201);
    await teacher
      .post(`/api/classes/${fx.classId}/roster`)
      .set(FORGED)
      .attach('file', Buffer.from('name,email\nQuentin Rosterhost,forged.host.three@cindervalley.example\n'), { filename: 'section.csv', contentType: 'text/csv' })
      .expect(201);
    for (const to of ['forged.host.one@cindervalley.example', 'forged.host.two@cindervalley.example', 'forged.host.three@cindervalley.example']) {
      const sent = await mailTo(to);
      expect(sent.length, to).toBeGreaterThan(0);
      for (const m of sent) expectLinkToPublicUrl(m.body);
    }
  });
});

describe('the server secret', () => {
  it('refuses to start in production without a public address, with the secret shipped in the source, or with a short one', () => {
    const base = { NODE_ENV: 'production', DATABASE_URL: 'postgres://loadline@localhost/loadline' };
    const good = { PUBLIC_URL, SESSION_SECRET: 'x'.repeat(PRODUCTION_SECRET_MIN) };
    expect(() => readEnv({ ...base, ...good })).not.toThrow();
    expect(() => readEnv({ ...base, SESSION_SECRET: good.SESSION_SECRET })).toThrow(/PUBLIC_URL: production needs PUBLIC_URL/);
    expect(() => readEnv({ ...base, PUBLIC_URL })).toThrow(/SESSION_SECRET: production needs SESSION_SECRET/);
    expect(() => readEnv({ ...base, PUBLIC_URL, SESSION_SECRET: DEVELOPMENT_SESSION_SECRET })).toThrow(/refuses the development session secret/);
    expect(() => readEnv({ ...base, PUBLIC_URL, SESSION_SECRET: 'y'.repeat(PRODUCTION_SECRET_MIN - 1) })).toThrow(/at least 32 characters/);
    expect(() => readEnv({ ...base, ...good, PUBLIC_URL: 'javascript:alert(1)' })).toThrow(/PUBLIC_URL/);
    // Outside production both have local defaults, and links go to this machine, never to a request's Host.
    expect(readEnv({ DATABASE_URL: base.DATABASE_URL, PORT: '5999' }).PUBLIC_URL).toBe('http://localhost:5999');
  });

  it('is made at random on npm start’s first run, kept beside the database’s data for the owner only, and the same on the next run', () => {
    const dir = mkdtempSync(join(tmpdir(), 'loadline-secret-'));
    try {
      const dataDir = join(dir, 'pg');
      const first = serverSecret(dataDir, () => undefined);
      expect(first).toMatch(/^[0-9a-f]{64}$/);
      expect(first).not.toBe(DEVELOPMENT_SESSION_SECRET);
      expect(secretFileFor(dataDir)).toBe(join(dir, 'pg.session-secret'));
      expect(statSync(secretFileFor(dataDir)).mode & 0o777).toBe(0o600);
      expect(serverSecret(dataDir, () => undefined)).toBe(first);
      // Another installation gets another secret.
      expect(serverSecret(join(dir, 'other'), () => undefined)).not.toBe(first);
    } finally {
      rmSync(dir, { recursive: true, force: true });
    }
  });

  it('refuses a session cookie signed with the shipped secret by a server with a secret of its own, and keeps its own cookies across a restart', async () => {
    const secret = 'an-installation-secret-0123456789abcdef';
    const first = await startTestApp({ SESSION_SECRET: secret }, t.databaseUrl);
    try {
      const agent = await signIn(first.app, admin.email);
      const me = await agent.get('/api/auth/me').expect(200);
      const cookie = me.request.cookies.split(';').find((c) => c.trim().startsWith('loadline.sid='))!.trim();
      const sid = decodeURIComponent(cookie.split('=')[1]!).replace(/^s:/, '').split('.')[0]!;
      // The attacker knows a session id (say, from a log) and the secret in the source: the signature they make is refused.
      const forgedSig = createHmac('sha256', DEVELOPMENT_SESSION_SECRET).update(sid).digest('base64').replace(/=+$/, '');
      const forged = `loadline.sid=${encodeURIComponent(`s:${sid}.${forgedSig}`)}`;
      expect((await supertest(first.app).get('/api/users').set('Cookie', forged)).status).toBe(401);
      // The same installation's secret after a restart: the session goes on.
      const second = await startTestApp({ SESSION_SECRET: secret }, t.databaseUrl);
      try {
        expect((await supertest(second.app).get('/api/users').set('Cookie', cookie)).status).toBe(200);
      } finally {
        await second.close();
      }
    } finally {
      await first.close();
    }
  });
});

describe('setting a password ends what the old one opened (ASVS 3.3.3, 2.5.x)', () => {
  it('signs out every other session of the account and kills every older link when a reset is used', async () => {
    const target = students[1]!.email;
    const laptop = await signIn(t.app, target);
    const phone = await signIn(t.app, target);
    expect((await laptop.get('/api/auth/me')).body.user?.email).toBe(target);
    // Someone asks for two resets; the first link is superseded by the second the moment it is made.
    const anon = await anonymousAgent(t.app);
    await anon.post('/api/auth/password-reset').send({ email: target }).expect(202);
    const firstLink = linkToken((await waitForMail(t.ctx, target)).body);
    await anon.post('/api/auth/password-reset').send({ email: target }).expect(202);
    const sent = await mailTo(target);
    const secondLink = linkToken(sent.at(-1)!.body);
    expect(secondLink).not.toBe(firstLink);
    const stale = await anon.post('/api/auth/set-password').send({ token: firstLink, password: 'superseded-password-1' });
    expect(stale.status).toBe(400);
    expect(stale.body.error.field).toBe('token');

    await anon.post('/api/auth/set-password').send({ token: secondLink, password: 'brand-new-password-2' }).expect(204);
    // Both old sessions are over, here and in the session cache (the change reached it at once).
    expect((await laptop.get('/api/auth/me')).body.user).toBeNull();
    expect((await phone.get('/api/classes')).status).toBe(401);
    // The used link stays used; the old password is gone; the new one works.
    expect((await anon.post('/api/auth/set-password').send({ token: secondLink, password: 'reused-link-password-3' })).status).toBe(400);
    expect((await anon.post('/api/auth/sign-in').send({ email: target, password: DEMO_PASSWORD })).status).toBe(401);
    await signIn(t.app, target, 'brand-new-password-2');
  });

  it('kills an outstanding invitation and every other session when the account’s password is set from a reset link', async () => {
    const adminAgent = await signIn(t.app, admin.email);
    const email = 'two.links@cindervalley.example';
    await adminAgent.post('/api/users').send({ email, name: 'Rosalind Twolinks', role: 'student' }).expect(201);
    const invitation = linkToken((await waitForMail(t.ctx, email)).body);
    const anon = await anonymousAgent(t.app);
    await anon.post('/api/auth/password-reset').send({ email }).expect(202);
    const reset = linkToken((await mailTo(email)).at(-1)!.body);
    await anon.post('/api/auth/set-password').send({ token: reset, password: 'chosen-by-reset-1' }).expect(204);
    // The invitation, older, no longer sets a password: whoever holds that mail cannot take the account over.
    expect((await anon.post('/api/auth/set-password').send({ token: invitation, password: 'chosen-by-invite-2' })).status).toBe(400);
    await signIn(t.app, email, 'chosen-by-reset-1');
  });
});
