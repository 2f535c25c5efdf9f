/**
 * Sessions, CSRF, rate limits, password storage and headers beyond what
 * auth.test.ts covers (regeneration at sign-in, sign-in limit, missing token,
 * foreign Origin, CSP basics).
 */
import { eq, sql } from 'drizzle-orm';
import supertest from 'supertest';
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';
import type { Cookie, SessionData } from 'express-session';
import { SESSION_MAX_AGE_MS, SESSION_TOUCH_EVERY_MS, throttledPgStore } from '../../server/accounts/session.ts';
import { DEMO_PEOPLE } from '../../server/db/demo-people.ts';
import { users } from '../../server/db/schema.ts';
import { anonymousAgent, DEMO_PASSWORD, signIn, startTestApp, type TestApp } from './support.ts';

const student = DEMO_PEOPLE.find((p) => p.role === 'student')!;
const admin = DEMO_PEOPLE.find((p) => p.role === 'admin')!;

let t: TestApp;
beforeAll(async () => {
  t = await startTestApp();
});
afterAll(async () => {
  await t.close();
});

const setCookies = (res: supertest.Response): string[] => ([] as string[]).concat(res.headers['set-cookie'] ?? []);
const sessionCookie = (res: supertest.Response) => setCookies(res).find((c) => c.startsWith('loadline.sid='));
const sidOf = (cookie: string) => decodeURIComponent(cookie.split(';')[0]!.split('=')[1]!).replace(/^s:/, '').split('.')[0]!;

describe('session lifetime', () => {
  it('sets a cookie that expires after the session lifetime, no more than 12 hours (ASVS 3.3.1, 3.3.2: idle and absolute timeouts)', async () => {
    const anon = await anonymousAgent(t.app);
    const res = await anon.post('/api/auth/sign-in').send({ email: student.email, password: DEMO_PASSWORD }).expect(200);
    const cookie = sessionCookie(res)!;
    // express-session states the lifetime as Expires (and Max-Age when it sends one).
    const maxAge = /Max-Age=(\d+)/i.exec(cookie)?.[1];
    if (maxAge !== undefined) expect(Number(maxAge)).toBe(SESSION_MAX_AGE_MS / 1000);
    expect(SESSION_MAX_AGE_MS).toBeLessThanOrEqual(12 * 3600_000);
    const expires = Date.parse(/Expires=([^;]+)/i.exec(cookie)![1]!);
    expect(Math.abs(expires - (Date.now() + SESSION_MAX_AGE_MS))).toBeLessThan(60_000);
    // The store's row expires at the same time, so an old cookie is dead server-side too.
    const rows = await t.ctx.pool.query<{ expire: Date }>('select expire from session where sid = $1', [sidOf(cookie)]);
    expect(rows.rows).toHaveLength(1);
    expect(Math.abs(rows.rows[0]!.expire.getTime() - (Date.now() + SESSION_MAX_AGE_MS))).toBeLessThan(60_000);
  });

  it('treats a session past its expiry as signed out (ASVS 3.3.1)', async () => {
    const agent = await signIn(t.app, student.email);
    const me = await agent.get('/api/auth/me').expect(200);
    expect(me.body.user?.email).toBe(student.email);
    const sid = sidOf(me.request.cookies.split(';').find((c) => c.trim().startsWith('loadline.sid='))!.trim());
    await t.ctx.pool.query("update session set expire = now() - interval '1 minute' where sid = $1", [sid]);
    // Cut short by hand, the session leaves this process's cache when the database's notification arrives (session-cache.test.ts).
    await vi.waitFor(async () => expect((await agent.get('/api/auth/me').expect(200)).body.user).toBeNull(), { timeout: 2_000, interval: 20 });
    const res = await agent.get('/api/classes');
    expect(res.status).toBe(401);
  });

  it('pushes the stored expiry on at most every few minutes, never past the cookie lifetime (common practice, no source: idle timeout kept within minutes)', async () => {
    let clock = Date.now();
    const store = throttledPgStore({ pool: t.ctx.pool, now: () => clock });
    const call = (f: (cb: (err?: unknown) => void) => void) => new Promise<void>((resolve, reject) => f((err) => (err ? reject(err) : resolve())));
    const sid = `throttle-${clock}`;
    const record = (expires: number) =>
      ({ cookie: { originalMaxAge: SESSION_MAX_AGE_MS, expires: new Date(expires), httpOnly: true, path: '/' } as unknown as Cookie, userId: 1, role: 'student', csrfToken: 'x' }) as SessionData & { cookie: Cookie };
    const storedExpiry = async () => (await t.ctx.pool.query<{ expire: Date }>('select expire from session where sid = $1', [sid])).rows[0]?.expire.getTime();

    await call((cb) => store.set(sid, record(clock + SESSION_MAX_AGE_MS), cb));
    const first = await storedExpiry();
    expect(first).toBeDefined();
    // A minute later: the cookie's lifetime moves on, the row does not (no write).
    clock += 60_000;
    await call((cb) => store.touch!(sid, record(clock + SESSION_MAX_AGE_MS), cb));
    expect(await storedExpiry()).toBe(first);
    // Past the window: the row catches up with the cookie.
    clock += SESSION_TOUCH_EVERY_MS;
    await call((cb) => store.touch!(sid, record(clock + SESSION_MAX_AGE_MS), cb));
    const later = await storedExpiry();
    expect(Math.abs(later! - (clock + SESSION_MAX_AGE_MS))).toBeLessThan(1000);
    expect(later! - first!).toBeGreaterThanOrEqual(SESSION_TOUCH_EVERY_MS);
    await call((cb) => store.destroy(sid, cb));
    expect(await storedExpiry()).toBeUndefined();
  });

  it('destroys the session at sign-out: the old cookie cannot be replayed (ASVS 3.3.1)', async () => {
    const agent = await signIn(t.app, admin.email);
    const me = await agent.get('/api/users').expect(200);
    const oldCookie = me.request.cookies;
    const csrf = agent.csrf;
    await agent.post('/api/auth/sign-out').expect(204);
    const sid = sidOf(oldCookie.split(';').find((c) => c.trim().startsWith('loadline.sid='))!.trim());
    const rows = await t.ctx.pool.query('select 1 from session where sid = $1', [sid]);
    expect(rows.rowCount).toBe(0);
    // Replay the exact cookie and token a stolen copy would carry.
    const replay = supertest(t.app);
    expect((await replay.get('/api/users').set('Cookie', oldCookie)).status).toBe(401);
    const write = await replay.post('/api/users').set('Cookie', oldCookie).set('X-CSRF-Token', csrf).send({ email: 'replay@cindervalley.example', name: 'Replay', role: 'admin' });
    expect([401, 403]).toContain(write.status);
    const [made] = await t.ctx.db.select({ id: users.id }).from(users).where(eq(users.email, 'replay@cindervalley.example'));
    expect(made).toBeUndefined();
  });

  it('refuses a forged or tampered session cookie (ASVS 3.2.2, 3.2.3)', async () => {
    const agent = await signIn(t.app, admin.email);
    const me = await agent.get('/api/auth/me');
    const cookie = me.request.cookies.split(';').find((c) => c.trim().startsWith('loadline.sid='))!.trim();
    const sid = sidOf(cookie);
    // The right session id with a made-up signature, and a made-up id.
    for (const forged of [`loadline.sid=${encodeURIComponent(`s:${sid}.AAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAA`)}`, `loadline.sid=${sid}`, 'loadline.sid=s%3Aforged.id']) {
      const res = await supertest(t.app).get('/api/users').set('Cookie', forged);
      expect(res.status, forged).toBe(401);
    }
  });

  it('makes session ids of at least 128 bits of randomness (ASVS 3.2.2)', async () => {
    const ids = new Set<string>();
    for (let i = 0; i < 5; i++) {
      const anon = await anonymousAgent(t.app);
      const res = await anon.post('/api/auth/sign-in').send({ email: student.email, password: DEMO_PASSWORD }).expect(200);
      const sid = sidOf(sessionCookie(res)!);
      expect(sid.length).toBeGreaterThanOrEqual(22); // base64url: 22 characters carry 128 bits
      ids.add(sid);
    }
    expect(ids.size).toBe(5);
  });
});

describe('CSRF', () => {
  it('refuses a token from another session (ASVS 4.2.2)', async () => {
    const a = await signIn(t.app, admin.email);
    const b = await signIn(t.app, admin.email);
    expect(a.csrf).not.toBe(b.csrf);
    const res = await a.post('/api/users').set('X-CSRF-Token', b.csrf).send({ email: 'cross.token@cindervalley.example', name: 'Cross', role: 'student' });
    expect(res.status).toBe(403);
    expect(res.body.error.field).toBe('x-csrf-token');
  });

  it('refuses an unsafe request whose Origin is a look-alike or malformed, and one sent as a plain form (ASVS 4.2.2, 13.2.3)', async () => {
    const agent = await signIn(t.app, admin.email);
    for (const origin of ['null', 'http://127.0.0.1.evil.invalid', 'not a url']) {
      const res = await agent.post('/api/classes').set('Origin', origin).send({ name: 'Forged class' });
      expect(res.status, origin).toBe(403);
      expect(res.body.error.field).toBe('origin');
    }
    // A cross-site form can send neither the header nor JSON.
    const form = await supertest(t.app).post('/api/classes').set('Cookie', (await agent.get('/api/auth/me')).request.cookies).type('form').send('name=Forged+class');
    expect(form.status).toBe(403);
    const [count] = (await t.ctx.pool.query<{ n: number }>("select count(*)::int as n from classes where name = 'Forged class'")).rows;
    expect(count!.n).toBe(0);
  });

  it('gives a fresh CSRF token at sign-in, and the anonymous one stops working (ASVS 3.2.1)', async () => {
    const anon = await anonymousAgent(t.app);
    const before = anon.csrf;
    const res = await anon.post('/api/auth/sign-in').send({ email: admin.email, password: DEMO_PASSWORD }).expect(200);
    expect(res.body.csrfToken).not.toBe(before);
    const stale = await anon.post('/api/classes').set('X-CSRF-Token', before).send({ name: 'Stale token class' });
    expect(stale.status).toBe(403);
  });
});

describe('rate limits', () => {
  it('trips the password-reset limits, per e-mail and per address, for known and unknown addresses alike (ASVS 2.2.1)', async () => {
    // A database of its own keeps the counters apart.
    const limited = await startTestApp({ RESET_REQUESTS_PER_EMAIL: '2', RESET_REQUESTS_PER_ADDRESS: '5' });
    try {
      const agent = await anonymousAgent(limited.app);
      const codes: number[] = [];
      for (const email of [student.email, student.email, student.email, 'ghost.one@cindervalley.example', 'ghost.one@cindervalley.example', 'ghost.one@cindervalley.example']) {
        codes.push((await agent.post('/api/auth/password-reset').send({ email })).status);
      }
      // Two per e-mail, known or not; then the address's fifth request is its last.
      expect(codes).toEqual([202, 202, 429, 202, 202, 429]);
      const blocked = await agent.post('/api/auth/password-reset').send({ email: 'ghost.two@cindervalley.example' });
      expect(blocked.status).toBe(429);
      expect(blocked.body.error.message).toMatch(/Too many reset requests/);
      expect(blocked.headers['ratelimit-policy'] ?? blocked.headers['ratelimit']).toBeDefined();
      // Setting a password has a limit of its own: the resets used up do not block it.
      const guess = await agent.post('/api/auth/set-password').send({ token: `guess-${'x'.repeat(30)}`, password: 'a-long-enough-password' });
      expect(guess.status).toBe(400);
      // Only the two allowed requests for the known address sent mail.
      await limited.ctx.background.settled();
      const sent = await limited.ctx.pool.query<{ n: number }>('select count(*)::int as n from outbox');
      expect(sent.rows[0]!.n).toBeLessThanOrEqual(2);
    } finally {
      await limited.close();
    }
  });
});

describe('passwords', () => {
  it('stores passwords as bcrypt hashes of cost 10 or more, never in the clear (ASVS 2.4.1, 2.4.4)', async () => {
    const rows = await t.ctx.db.select({ hash: users.passwordHash }).from(users).where(sql`${users.passwordHash} is not null`);
    expect(rows.length).toBeGreaterThan(5);
    for (const { hash } of rows) {
      const m = /^\$2[aby]\$(\d\d)\$[./A-Za-z0-9]{53}$/.exec(hash!);
      expect(m, 'a bcrypt hash').not.toBeNull();
      expect(Number(m![1])).toBeGreaterThanOrEqual(10);
      expect(hash).not.toContain(DEMO_PASSWORD);
    }
  });

  it('never sends a password hash in any user list (ASVS 8.3.1)', async () => {
    const agent = await signIn(t.app, admin.email);
    const res = await agent.get('/api/users').expect(200);
    expect(res.text).not.toMatch(/\$2[aby]\$/);
    expect(res.text).not.toMatch(/passwordHash/);
  });
});

describe('headers', () => {
  it('sends the security headers on API answers (ASVS 14.4.1 to 14.4.7)', async () => {
    const res = await supertest(t.app).get('/api/auth/me');
    const h = res.headers;
    expect(h['content-type']).toMatch(/^application\/json; charset=utf-8/);
    expect(h['x-content-type-options']).toBe('nosniff');
    expect(h['x-frame-options']).toBe('SAMEORIGIN');
    expect(h['referrer-policy']).toBe('no-referrer');
    expect(h['strict-transport-security']).toMatch(/max-age=\d{7,}/);
    expect(h['cross-origin-opener-policy']).toBe('same-origin');
    expect(h['cross-origin-resource-policy']).toBe('same-origin');
    expect(h['cache-control']).toBe('no-store');
    // Nothing to revalidate in a no-store answer, so no ETag is worked out for it.
    expect(h.etag).toBeUndefined();
    expect(h['x-powered-by']).toBeUndefined();
    const csp = h['content-security-policy']!;
    for (const directive of ["default-src 'self'", "script-src 'self'", "object-src 'none'", "base-uri 'self'", "form-action 'self'", "frame-ancestors 'none'"]) {
      expect(csp).toContain(directive);
    }
    expect(csp).not.toMatch(/unsafe-inline|unsafe-eval|\*/);
  });

  it('sends no-store and the same headers on an error answer (ASVS 14.4.1, 8.2.1)', async () => {
    const res = await supertest(t.app).get('/api/users');
    expect(res.status).toBe(401);
    expect(res.headers['cache-control']).toBe('no-store');
    expect(res.headers['x-content-type-options']).toBe('nosniff');
    expect(res.headers['content-security-policy']).toContain("frame-ancestors 'none'");
  });

  it('sends CSV exports as attachments with their type (ASVS 14.4.2)', async () => {
    const agent = await signIn(t.app, DEMO_PEOPLE.find((p) => p.role === 'instructor')!.email);
    const classes = await agent.get('/api/classes').expect(200);
    const classId = classes.body.classes[0].id as number;
    const res = await agent.get(`/api/sign-offs/classes/${classId}/sign-offs.csv`).expect(200);
    expect(res.headers['content-type']).toMatch(/^text\/csv/);
    expect(res.headers['content-disposition']).toMatch(/^attachment; filename="[\w.-]+"$/);
  });
});
