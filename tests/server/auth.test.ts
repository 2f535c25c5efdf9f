import supertest from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DEMO_PEOPLE } from '../../server/db/demo-people.ts';
import { anonymousAgent, DEMO_PASSWORD, linkToken, signIn, startTestApp, waitForMail, type TestApp } from './support.ts';

const admin = DEMO_PEOPLE.find((p) => p.role === 'admin')!;
const instructor = DEMO_PEOPLE.find((p) => p.role === 'instructor')!;
const student = DEMO_PEOPLE.find((p) => p.role === 'student')!;

let t: TestApp;
beforeAll(async () => {
  t = await startTestApp();
});
afterAll(async () => {
  await t.close();
});

const sidOf = (res: supertest.Response) =>
  ([] as string[]).concat(res.headers['set-cookie'] ?? []).find((c) => c.startsWith('loadline.sid='))?.split(';')[0];

describe('sign-in', () => {
  it('accepts the right password and reports the user through /me', async () => {
    const agent = await signIn(t.app, student.email);
    const me = await agent.get('/api/auth/me').expect(200);
    expect(me.body.user).toMatchObject({ email: student.email, role: 'student', name: student.name });
    expect(me.body.user.passwordHash).toBeUndefined();
  });

  it('refuses a wrong password and an unknown e-mail with the same 401', async () => {
    const agent = await anonymousAgent(t.app);
    const wrong = await agent.post('/api/auth/sign-in').send({ email: student.email, password: 'not-the-password' });
    const unknown = await agent.post('/api/auth/sign-in').send({ email: 'nobody@cindervalley.example', password: 'whatever-it-is' });
    expect(wrong.status).toBe(401);
    expect(unknown.status).toBe(401);
    expect(wrong.body.error.message).toBe(unknown.body.error.message);
  });

  it('accepts the e-mail in any letter case', async () => {
    const agent = await anonymousAgent(t.app);
    await agent.post('/api/auth/sign-in').send({ email: student.email.toUpperCase(), password: DEMO_PASSWORD }).expect(200);
  });

  it('answers 400 naming the field when the body is malformed', async () => {
    const agent = await anonymousAgent(t.app);
    const res = await agent.post('/api/auth/sign-in').send({ email: 'not-an-email', password: 'x' }).expect(400);
    expect(res.body.error.field).toBe('email');
    expect(res.body.error.message).toMatch(/email: Enter a valid e-mail address/);
    const missing = await agent.post('/api/auth/sign-in').send({ email: student.email }).expect(400);
    expect(missing.body.error.field).toBe('password');
  });

  it('starts no session before sign-in, makes a new session id at each sign-in and sets a httpOnly, SameSite=Lax cookie (ASVS 3.2.1)', async () => {
    const agent = supertest.agent(t.app);
    const first = await agent.get('/api/auth/me').expect(200);
    expect(sidOf(first)).toBeUndefined();
    const signedIn = await agent.post('/api/auth/sign-in').set('X-CSRF-Token', first.body.csrfToken).send({ email: student.email, password: DEMO_PASSWORD }).expect(200);
    const before = sidOf(signedIn);
    expect(before).toBeTruthy();
    // Signing in again on the same browser (the case of a planted session id) gives a new id; the old one is gone.
    const res = await agent.post('/api/auth/sign-in').set('X-CSRF-Token', signedIn.body.csrfToken as string).send({ email: student.email, password: DEMO_PASSWORD }).expect(200);
    const after = sidOf(res);
    expect(after).toBeTruthy();
    expect(after).not.toBe(before);
    const old = decodeURIComponent(before!.split('=')[1]!).replace(/^s:/, '').split('.')[0]!;
    expect((await t.ctx.pool.query('select 1 from session where sid = $1', [old])).rowCount).toBe(0);
    const raw = ([] as string[]).concat(res.headers['set-cookie'] ?? []).join(';');
    expect(raw).toMatch(/HttpOnly/i);
    expect(raw).toMatch(/SameSite=Lax/i);
    expect(raw).not.toMatch(/Secure/i);
  });

  it('marks the cookies Secure behind a TLS proxy', async () => {
    const behind = await startTestApp({ TRUST_PROXY: '1' }, t.databaseUrl);
    try {
      const me = await supertest(behind.app).get('/api/auth/me').set('X-Forwarded-Proto', 'https').expect(200);
      const csrfCookie = ([] as string[]).concat(me.headers['set-cookie'] ?? []).find((c) => c.startsWith('loadline.csrf='))!;
      expect(csrfCookie).toMatch(/Secure/);
      // The cookie jar keeps Secure cookies for https: sent by hand, as a browser would over TLS.
      const res = await supertest(behind.app)
        .post('/api/auth/sign-in')
        .set('X-Forwarded-Proto', 'https')
        .set('Cookie', csrfCookie.split(';')[0]!)
        .set('X-CSRF-Token', me.body.csrfToken)
        .send({ email: student.email, password: DEMO_PASSWORD })
        .expect(200);
      expect(([] as string[]).concat(res.headers['set-cookie'] ?? []).find((c) => c.startsWith('loadline.sid='))).toMatch(/Secure/);
    } finally {
      await behind.close();
    }
  });

  it('signs out by destroying the session', async () => {
    const agent = await signIn(t.app, student.email);
    await agent.post('/api/auth/sign-out').expect(204);
    const me = await agent.get('/api/auth/me').expect(200);
    expect(me.body.user).toBeNull();
  });

  it('keeps a session across a server restart, because it lives in PostgreSQL', async () => {
    const first = await startTestApp({}, t.databaseUrl);
    const agent = await signIn(first.app, instructor.email);
    const cookie = (await agent.get('/api/auth/me')).request.cookies;
    await first.close();
    const second = await startTestApp({}, t.databaseUrl);
    try {
      const me = await supertest(second.app).get('/api/auth/me').set('Cookie', cookie).expect(200);
      expect(me.body.user?.email).toBe(instructor.email);
    } finally {
      await second.close();
    }
  });
});

describe('rate limit', () => {
  it('refuses an account after the allowed failed sign-ins from one address, in every process, and counts no success (ASVS 2.2.1)', async () => {
    // A database of its own: the counters live in PostgreSQL and the other tests share this address.
    const limited = await startTestApp({ SIGN_IN_FAILURES_PER_ACCOUNT: '3' });
    try {
      // Correct sign-ins first: never counted, however many.
      for (let i = 0; i < 5; i++) await signIn(limited.app, student.email);
      const fresh = await anonymousAgent(limited.app);
      const codes: number[] = [];
      for (let i = 0; i < 5; i++) {
        codes.push((await fresh.post('/api/auth/sign-in').send({ email: student.email, password: 'wrong-password-here' })).status);
      }
      expect(codes).toEqual([401, 401, 401, 429, 429]);
      const blocked = await fresh.post('/api/auth/sign-in').send({ email: student.email, password: DEMO_PASSWORD });
      expect(blocked.status).toBe(429);
      expect(blocked.body.error.message).toMatch(/Too many failed sign-ins to this account/);
      expect(Number(blocked.headers['retry-after'])).toBeGreaterThan(0);
      // A second server process on the same database counts the same client.
      const sibling = await startTestApp({ SIGN_IN_FAILURES_PER_ACCOUNT: '3' }, limited.databaseUrl);
      try {
        const other = await anonymousAgent(sibling.app);
        expect((await other.post('/api/auth/sign-in').send({ email: student.email, password: DEMO_PASSWORD })).status).toBe(429);
      } finally {
        await sibling.close();
      }
    } finally {
      await limited.close();
    }
  });
});

describe('CSRF defence', () => {
  it('refuses an unsafe request without the token', async () => {
    const agent = await signIn(t.app, admin.email);
    const res = await supertest(t.app)
      .post('/api/users')
      .set('Cookie', (await agent.get('/api/auth/me')).request.cookies)
      .send({ email: 'x@cindervalley.example', name: 'X', role: 'student' });
    expect(res.status).toBe(403);
    expect(res.body.error.field).toBe('x-csrf-token');
  });

  it('refuses a request from another origin even with a token', async () => {
    const agent = await signIn(t.app, admin.email);
    const res = await agent.post('/api/auth/sign-out').set('Origin', 'https://elsewhere.invalid');
    expect(res.status).toBe(403);
    expect(res.body.error.field).toBe('origin');
  });
});

describe('accounts', () => {
  it('lets an admin create a user, who gets an invitation whose link works once', async () => {
    const agent = await signIn(t.app, admin.email);
    const email = 'new.student@cindervalley.example';
    const res = await agent.post('/api/users').send({ email, name: 'Nell Ashcombe', role: 'student' }).expect(201);
    expect(res.body).toMatchObject({ invited: true, user: { email, role: 'student', hasPassword: false } });
    const mail = await waitForMail(t.ctx, email);
    expect(mail.subject).toMatch(/invited/i);
    const token = linkToken(mail.body);
    const anon = await anonymousAgent(t.app);
    await anon.post('/api/auth/set-password').send({ token, password: 'a-fresh-password-1' }).expect(204);
    const again = await anon.post('/api/auth/set-password').send({ token, password: 'another-password-2' }).expect(400);
    expect(again.body.error.field).toBe('token');
    await signIn(t.app, email, 'a-fresh-password-1');
  });

  it('answers 409 on a duplicate e-mail, naming the field', async () => {
    const agent = await signIn(t.app, admin.email);
    const res = await agent.post('/api/users').send({ email: student.email.toUpperCase(), name: 'Dup', role: 'student' }).expect(409);
    expect(res.body.error.field).toBe('email');
  });

  it('lets an admin change a role and disable an account, which then cannot sign in', async () => {
    const agent = await signIn(t.app, admin.email);
    const created = await agent
      .post('/api/users')
      .send({ email: 'temp.instructor@cindervalley.example', name: 'Ivo Penhallow', role: 'student', password: 'temporary-pass-1' })
      .expect(201);
    const id = created.body.user.id as number;
    const victim = await signIn(t.app, 'temp.instructor@cindervalley.example', 'temporary-pass-1');
    await agent.patch(`/api/users/${id}`).send({ role: 'instructor' }).expect(200);
    expect((await victim.get('/api/auth/me')).body.user.role).toBe('instructor');
    await agent.patch(`/api/users/${id}`).send({ disabled: true }).expect(200);
    // The live session ends at once, and a new sign-in is refused.
    expect((await victim.get('/api/auth/me')).body.user).toBeNull();
    const anon = await anonymousAgent(t.app);
    const res = await anon.post('/api/auth/sign-in').send({ email: 'temp.instructor@cindervalley.example', password: 'temporary-pass-1' });
    expect(res.status).toBe(403);
    expect(res.body.error.message).toMatch(/disabled/);
  });

  it('does not let an admin disable themself', async () => {
    const agent = await signIn(t.app, admin.email);
    const me = await agent.get('/api/auth/me');
    const res = await agent.patch(`/api/users/${me.body.user.id}`).send({ disabled: true }).expect(400);
    expect(res.body.error.field).toBe('disabled');
  });

  it('rejects unknown fields in an update', async () => {
    const agent = await signIn(t.app, admin.email);
    const res = await agent.patch('/api/users/2').send({ passwordHash: 'x' }).expect(400);
    expect(res.body.error.message).toMatch(/Unrecognized key/i);
  });

  it('sends a password reset whose link works once, and says the same for unknown addresses', async () => {
    const anon = await anonymousAgent(t.app);
    const known = await anon.post('/api/auth/password-reset').send({ email: student.email }).expect(202);
    const unknown = await anon.post('/api/auth/password-reset').send({ email: 'ghost@cindervalley.example' }).expect(202);
    expect(known.body.message).toBe(unknown.body.message);
    const mail = await waitForMail(t.ctx, student.email);
    const token = linkToken(mail.body);
    await anon.post('/api/auth/set-password').send({ token, password: 'reset-password-99' }).expect(204);
    await anon.post('/api/auth/set-password').send({ token, password: 'reset-password-98' }).expect(400);
    await signIn(t.app, student.email, 'reset-password-99');
  });
});

describe('the API surface', () => {
  it('answers unknown API routes with a JSON 404', async () => {
    const res = await supertest(t.app).get('/api/no-such-thing').expect(404);
    expect(res.headers['content-type']).toMatch(/json/);
    expect(res.body.error.message).toMatch(/No API route/);
  });

  it('sends security headers with a content security policy', async () => {
    const res = await supertest(t.app).get('/api/auth/me');
    expect(res.headers['content-security-policy']).toMatch(/default-src 'self'/);
    expect(res.headers['content-security-policy']).toMatch(/frame-ancestors 'none'/);
    expect(res.headers['x-content-type-options']).toBe('nosniff');
    expect(res.headers['x-powered-by']).toBeUndefined();
  });

  it('hides error details in production', async () => {
    const prod = await startTestApp({ NODE_ENV: 'production', PUBLIC_URL: 'https://loadline.example', SESSION_SECRET: 'a-production-secret-of-forty-characters!' }, t.databaseUrl);
    try {
      const agent = await anonymousAgent(prod.app);
      const res = await agent.post('/api/auth/sign-in').set('Content-Type', 'application/json').send('{"email": ');
      expect(res.status).toBe(400);
      expect(JSON.stringify(res.body)).not.toMatch(/at .*\.ts:\d+/);
      expect(res.body.error.field).toBe('body');
    } finally {
      await prod.close();
    }
  });

  it('guards every route by role: anonymous 401, other roles 403, the right role passes the guard', async () => {
    const agents = {
      anonymous: await anonymousAgent(t.app),
      student: await signIn(t.app, DEMO_PEOPLE.filter((p) => p.role === 'student')[3]!.email),
      instructor: await signIn(t.app, instructor.email),
      admin: await signIn(t.app, admin.email),
    };
    expect(t.routes.length).toBeGreaterThan(5);
    // Sign-out ends the session it is sent with, so it goes last.
    const ordered = [...t.routes].sort((a, b) => Number(a.path.endsWith('/sign-out')) - Number(b.path.endsWith('/sign-out')));
    for (const route of ordered) {
      const path = route.path.replace(/:(\w+)/g, '999999');
      for (const [who, agent] of Object.entries(agents)) {
        const res = await agent[route.method](path).send({});
        const label = `${who} ${route.method.toUpperCase()} ${route.path} -> ${res.status}`;
        const allowed =
          route.access === 'public' || (who !== 'anonymous' && (route.access === 'signed-in' || route.access.includes(who as 'admin')));
        if (!allowed) {
          expect(res.status, label).toBe(who === 'anonymous' ? 401 : 403);
        } else {
          expect(res.status, label).not.toBe(401);
          expect(res.body?.error?.message ?? '', label).not.toBe('Your role cannot do this');
          expect(res.status, label).toBeLessThan(500);
        }
      }
    }
  });
});
