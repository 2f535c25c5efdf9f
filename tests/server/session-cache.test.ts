/**
 * The session cache (server/accounts/session.ts): a signed-in request is usually
 * served without reading its session, yet a session that ends, is cut short
 * or whose account changes stops working in every process: at once in the
 * process that made the change, and within moments in the others, which hear
 * of it from the database (common practice, no source: the ASVS 3.3.1 rule
 * that logout and expiry invalidate the session, held across processes).
 */
import type { Cookie, SessionData } from 'express-session';
import supertest from 'supertest';
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';
import { SESSION_KEPT_MS, SESSION_MAX_AGE_MS, throttledPgStore } from '../../server/accounts/session.ts';
import { DEMO_PEOPLE } from '../../server/db/demo-people.ts';
import { sessionBusFor, SESSION_CHANNEL, USER_CHANNEL, type LiveBus } from '../../server/db/live-bus.ts';
import { signIn, startTestApp, type TestApp } from './support.ts';

const student = DEMO_PEOPLE.find((p) => p.role === 'student')!;
const admin = DEMO_PEOPLE.find((p) => p.role === 'admin')!;

let t: TestApp;
let other: TestApp;
beforeAll(async () => {
  t = await startTestApp();
  // A second server process on the same database.
  other = await startTestApp({}, t.databaseUrl);
});
afterAll(async () => {
  await other.close();
  await t.close();
});

/** A bus the test drives: it says when it is connected, and delivers what the test sends. */
function fakeBus() {
  const listeners = new Map<string, Set<(payload: string) => void>>();
  const reconnects = new Set<() => void>();
  let up = true;
  const bus: LiveBus = {
    async subscribe(channel, listener) {
      if (!listeners.has(channel)) listeners.set(channel, new Set());
      listeners.get(channel)!.add(listener);
      return () => listeners.get(channel)!.delete(listener);
    },
    onReconnect(listener) {
      reconnects.add(listener);
      return () => reconnects.delete(listener);
    },
    async notify() {},
    connected: () => up,
    async close() {},
  };
  return {
    bus,
    send: (channel: string, payload: string) => listeners.get(channel)?.forEach((l) => l(payload)),
    drop: () => {
      up = false;
    },
    reconnect: () => {
      up = true;
      reconnects.forEach((l) => l());
    },
  };
}

describe('the session cache of one store', () => {
  let clock = Date.now();
  let reads = 0;
  let userId = 0;
  const fake = fakeBus();
  let store: ReturnType<typeof throttledPgStore>;
  const call = (f: (cb: (err?: unknown) => void) => void) => new Promise<void>((resolve, reject) => f((err) => (err ? reject(err) : resolve())));
  const get = (sid: string) =>
    new Promise<(SessionData & { cookie: Cookie }) | null>((resolve, reject) => store.get(sid, (err, sess) => (err ? reject(err as Error) : resolve(sess ?? null))));
  const record = (expires: number) =>
    ({ cookie: { originalMaxAge: SESSION_MAX_AGE_MS, expires: new Date(expires), httpOnly: true, path: '/' } as unknown as Cookie, userId, role: 'student', csrfToken: 'x' }) as SessionData & { cookie: Cookie };
  let n = 0;
  const newSession = async () => {
    const sid = `cache-${Date.now()}-${n++}`;
    await call((cb) => store.set(sid, record(Date.now() + SESSION_MAX_AGE_MS), cb));
    return sid;
  };

  beforeAll(async () => {
    userId = (await t.ctx.pool.query<{ id: number }>('select id from users where lower(email) = $1', [student.email])).rows[0]!.id;
    // Counts the session reads that reach the database.
    const pool = new Proxy(t.ctx.pool, {
      get(target, prop, receiver) {
        if (prop === 'query') {
          return (...args: Parameters<typeof target.query>) => {
            const first = args[0] as unknown;
            if (typeof first === 'object' && first !== null && (first as { name?: string }).name === 'session-get-with-user') reads++;
            return (target.query as (...a: unknown[]) => unknown).apply(target, args);
          };
        }
        return Reflect.get(target, prop, receiver) as unknown;
      },
    });
    store = throttledPgStore({ pool, bus: fake.bus, now: () => clock });
  });

  it('reads a session once, then serves it from memory, a fresh copy each time', async () => {
    const sid = await newSession();
    const before = reads;
    const first = await get(sid);
    expect(first?.userId).toBe(userId);
    first!.csrfToken = 'changed by a request';
    const second = await get(sid);
    expect(second?.csrfToken).toBe('x');
    expect(reads - before).toBe(1);
  });

  it('forgets a session on its notification, on its user’s, and at once when this store destroys or rewrites it', async () => {
    for (const end of [
      (sid: string) => fake.send(SESSION_CHANNEL, sid),
      () => fake.send(USER_CHANNEL, String(userId)),
      (sid: string) => call((cb) => store.destroy(sid, cb)),
      (sid: string) => call((cb) => store.set(sid, { ...record(Date.now() + SESSION_MAX_AGE_MS), csrfToken: 'rewritten' }, cb)),
    ]) {
      const sid = await newSession();
      await get(sid);
      const before = reads;
      await get(sid);
      expect(reads).toBe(before);
      await end(sid);
      await get(sid);
      expect(reads).toBe(before + 1);
    }
  });

  it('never serves a session past its expiry, and reads a kept one again after a while', async () => {
    const sid = `cache-expiring-${Date.now()}`;
    await call((cb) => store.set(sid, record(Date.now() + SESSION_MAX_AGE_MS), cb));
    await t.ctx.pool.query("update session set expire = localtimestamp + interval '30 seconds' where sid = $1", [sid]);
    expect((await get(sid))?.userId).toBe(userId);
    const before = reads;
    clock += 29_000;
    expect((await get(sid))?.userId).toBe(userId);
    expect(reads).toBe(before);
    // Past the stored expiry by this store's clock: read again (the database, on its own clock, still has it).
    clock += 2_000;
    await get(sid);
    expect(reads).toBe(before + 1);
    // And a kept session is read again after SESSION_KEPT_MS whatever its expiry.
    const long = await newSession();
    await get(long);
    const mark = reads;
    clock += SESSION_KEPT_MS + 1;
    await get(long);
    expect(reads).toBe(mark + 1);
  });

  it('reads every session from the database while it cannot hear notifications, and drops what it kept once they resume', async () => {
    const sid = await newSession();
    await get(sid);
    fake.drop();
    const before = reads;
    await get(sid);
    await get(sid);
    expect(reads).toBe(before + 2);
    fake.reconnect();
    await get(sid);
    expect(reads).toBe(before + 3);
    await get(sid);
    expect(reads).toBe(before + 3);
  });
});

describe('the session cache across server processes', () => {
  it('ends a session signed out in another process within moments', async () => {
    const here = await signIn(t.app, student.email);
    const me = await here.get('/api/auth/me').expect(200);
    expect(me.body.user?.email).toBe(student.email);
    // The same browser's next request lands on the other process, which signs it out.
    await supertest(other.app).post('/api/auth/sign-out').set('Cookie', me.request.cookies).set('X-CSRF-Token', here.csrf).expect(204);
    await vi.waitFor(async () => expect((await here.get('/api/auth/me').expect(200)).body.user).toBeNull(), { timeout: 2_000, interval: 20 });
  });

  it('counts an account disabled by hand in the database within moments', async () => {
    const agent = await signIn(t.app, admin.email);
    const created = await agent.post('/api/users').send({ email: 'cache.check@cindervalley.example', name: 'Wren Halloway', role: 'student', password: 'cache-check-pass-1' }).expect(201);
    const victim = await signIn(t.app, 'cache.check@cindervalley.example', 'cache-check-pass-1');
    expect((await victim.get('/api/auth/me').expect(200)).body.user?.email).toBe('cache.check@cindervalley.example');
    await t.ctx.pool.query('update users set disabled = true where id = $1', [created.body.user.id]);
    await vi.waitFor(async () => expect((await victim.get('/api/auth/me').expect(200)).body.user).toBeNull(), { timeout: 2_000, interval: 20 });
  });

  it('goes to the database for every session while its listening connection is down', async () => {
    const here = await signIn(t.app, student.email);
    const me = await here.get('/api/auth/me').expect(200);
    const sid = decodeURIComponent(/loadline\.sid=([^;]+)/.exec(me.request.cookies)![1]!).replace(/^s:/, '').split('.')[0]!;
    const bus = sessionBusFor(t.ctx);
    await vi.waitFor(() => expect(bus.connected()).toBe(true), { timeout: 2_000 });
    await t.ctx.pool.query("select pg_terminate_backend(pid) from pg_stat_activity where datname = current_database() and query like 'LISTEN loadline_user' and pid <> pg_backend_pid()");
    await vi.waitFor(() => expect(bus.connected()).toBe(false), { timeout: 2_000, interval: 5 });
    // Deleted by hand while nobody listens: no notification reaches this process, yet the next request is anonymous.
    await t.ctx.pool.query('delete from session where sid = $1', [sid]);
    expect((await here.get('/api/auth/me').expect(200)).body.user).toBeNull();
    // And the cache comes back into use once listening resumes.
    await vi.waitFor(() => expect(bus.connected()).toBe(true), { timeout: 5_000 });
    const again = await signIn(t.app, student.email);
    expect((await again.get('/api/auth/me').expect(200)).body.user?.email).toBe(student.email);
  });
});
