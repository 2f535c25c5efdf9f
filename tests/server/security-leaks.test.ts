/**
 * Smaller leaks and costs, written as what a student or a visitor can do:
 * read the title of an assignment that has not opened from the class
 * comparison; store a session row per cookieless request; run an attempt for
 * any length of sim time; start practice runs and send submissions without
 * end, choosing how much grading the server does.
 *
 * Sources: OWASP ASVS 4.0 V4.1.3 and V8.3.x (no data before its time),
 * V3.2.1 (sessions made at sign-in), V4.2.2 (CSRF), V11.1.4 (anti-automation
 * against excessive use of costly functions); from memory. The two-hour bound
 * on an attempt is ours, reasoned in shared/api/attempts.ts (common practice,
 * no source).
 */
import { eq } from 'drizzle-orm';
import supertest from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { VEHICLE_PARAM_BOUNDS } from '../../sim/params.ts';
import { assignments } from '../../server/db/schema.ts';
import { MAX_ATTEMPT_MS } from '../../shared/api/attempts.ts';
import { assignmentId, scenarioId } from './attempts-bench.ts';
import { makeClass, students } from './live-fixtures.ts';
import { anonymousAgent, DEMO_PASSWORD, signIn, startTestApp, type TestApp } from './support.ts';

let t: TestApp;
beforeAll(async () => {
  t = await startTestApp();
});
afterAll(async () => {
  await t?.close();
});

const sessionRows = async () => (await t.ctx.pool.query<{ n: number }>('select count(*)::int as n from session')).rows[0]!.n;
const submitBody = (atMs: number) => ({ atMs, readings: [], diagnosis: { verdicts: [], faultKind: 'none', notes: '' } });

describe('an assignment that has not opened', () => {
  it('shows a student nothing of it in the class comparison, its title included; its instructor sees it', async () => {
    const fx = await makeClass(t.ctx.db, { students: 1, name: 'Comparison section' });
    const secret = 'Week 9: the surprise parasitic draw';
    await t.ctx.db.update(assignments).set({ title: secret, opensAt: new Date(Date.now() + 7 * 86_400_000), dueAt: new Date(Date.now() + 14 * 86_400_000) }).where(eq(assignments.id, fx.assignmentId));
    const student = await signIn(t.app, students[0]!.email);
    const res = await student.get(`/api/compare/assignments/${fx.assignmentId}`);
    expect(res.status).toBe(403);
    expect(res.body.error.message).toBe('This assignment has not opened yet');
    expect(res.text).not.toContain('surprise');
    const teacher = await signIn(t.app, 'r.okafor-lind@cindervalley.example');
    expect((await teacher.get(`/api/compare/assignments/${fx.assignmentId}`).expect(200)).body.assignment.title).toBe(secret);
    // Once it opens, the student sees the comparison.
    await t.ctx.db.update(assignments).set({ opensAt: new Date(Date.now() - 60_000) }).where(eq(assignments.id, fx.assignmentId));
    expect((await student.get(`/api/compare/assignments/${fx.assignmentId}`).expect(200)).body.assignment.title).toBe(secret);
  });
});

describe('visitors without a cookie', () => {
  it('store no session row, however many times they ask who they are', async () => {
    const before = await sessionRows();
    for (let i = 0; i < 25; i++) {
      const res = await supertest(t.app).get('/api/auth/me').expect(200);
      expect(res.body.user).toBeNull();
      expect(([] as string[]).concat(res.headers['set-cookie'] ?? []).some((c) => c.startsWith('loadline.sid='))).toBe(false);
    }
    expect(await sessionRows()).toBe(before);
  });

  it('still get a CSRF token that signs them in, bound to their own browser, and a session only then', async () => {
    const before = await sessionRows();
    const visitor = await anonymousAgent(t.app);
    // The token works with the cookie it came with…
    await visitor.post('/api/auth/sign-in').send({ email: students[0]!.email, password: DEMO_PASSWORD }).expect(200);
    expect(await sessionRows()).toBe(before + 1);
    // …and not without it, nor with another visitor's cookie, nor made up.
    const other = await supertest(t.app).get('/api/auth/me').expect(200);
    const otherCookie = ([] as string[]).concat(other.headers['set-cookie'] ?? []).map((c) => c.split(';')[0]!).join('; ');
    const mine = await supertest(t.app).get('/api/auth/me').expect(200);
    for (const [what, req] of [
      ['no cookie', supertest(t.app).post('/api/auth/sign-in').set('X-CSRF-Token', mine.body.csrfToken as string)],
      ['another visitor’s cookie', supertest(t.app).post('/api/auth/sign-in').set('Cookie', otherCookie).set('X-CSRF-Token', mine.body.csrfToken as string)],
      ['a made-up token', supertest(t.app).post('/api/auth/sign-in').set('Cookie', otherCookie).set('X-CSRF-Token', 'A'.repeat(43))],
    ] as const) {
      const res = await req.send({ email: students[0]!.email, password: DEMO_PASSWORD });
      expect(res.status, what).toBe(403);
      expect(res.body.error.field, what).toBe('x-csrf-token');
    }
    expect(await sessionRows()).toBe(before + 1);
  });
});

describe('the length of an attempt', () => {
  it('is two hours of sim time: enough for the slowest key-off draw test with a lab around it', () => {
    expect(MAX_ATTEMPT_MS).toBe(2 * 3600_000);
    expect(MAX_ATTEMPT_MS - VEHICLE_PARAM_BOUNDS['loads.moduleSleepDelayS'].max * 1000).toBeGreaterThanOrEqual(30 * 60_000);
  });

  it('refuses an event or a submission past the bound, naming the field', async () => {
    const ada = await signIn(t.app, students[0]!.email);
    const started = await ada.post('/api/attempts').send({ scenarioId: await scenarioId(t.ctx, 'healthy-control-corvane-linden'), mode: 'practice' }).expect(201);
    const id = started.body.attempt.id as number;
    const late = await ada.post(`/api/attempts/${id}/events`).send({ events: [{ seq: 1, event: { kind: 'pile', atMs: MAX_ATTEMPT_MS + 10, dial01: 0 } }] });
    expect(late.status).toBe(400);
    expect(late.body.error.field).toBe('events.0.event.atMs');
    expect(late.body.error.message).toMatch(/two hours/);
    const lateSubmit = await ada.post(`/api/attempts/${id}/submit`).send(submitBody(MAX_ATTEMPT_MS + 10));
    expect(lateSubmit.status).toBe(400);
    expect(lateSubmit.body.error.field).toBe('atMs');
    // At the bound itself, both are taken.
    await ada.post(`/api/attempts/${id}/events`).send({ events: [{ seq: 1, event: { kind: 'pile', atMs: MAX_ATTEMPT_MS, dial01: 0 } }] }).expect(200);
  });
});

describe('the grading a student can ask for', () => {
  it('limits practice starts and submissions per student, not assigned starts, and not the rest of the class', async () => {
    const limited = await startTestApp({ PRACTICE_STARTS_PER_HOUR: '3', SUBMISSIONS_PER_HOUR: '2' }, t.databaseUrl);
    try {
      const practice = await scenarioId(limited.ctx, 'healthy-control-corvane-linden');
      const bo = await signIn(limited.app, students[1]!.email);
      const started: number[] = [];
      for (let i = 0; i < 3; i++) started.push((await bo.post('/api/attempts').send({ scenarioId: practice, mode: 'practice' }).expect(201)).body.attempt.id as number);
      const fourth = await bo.post('/api/attempts').send({ scenarioId: practice, mode: 'practice' });
      expect(fourth.status).toBe(429);
      expect(fourth.body.error.message).toMatch(/3 practice runs in the last hour/);
      // An assignment is limited by its attempts allowed, not by this.
      await bo.post('/api/attempts').send({ assignmentId: await assignmentId(limited.ctx, 'Week 1: no-charge complaint') }).expect(201);
      // Another student is not held back by Bo.
      const cyrus = await signIn(limited.app, students[2]!.email);
      await cyrus.post('/api/attempts').send({ scenarioId: practice, mode: 'practice' }).expect(201);
      // Two submissions an hour here: the third waits, whichever attempt it is for.
      await bo.post(`/api/attempts/${started[0]}/submit`).send(submitBody(1000)).expect(200);
      await bo.post(`/api/attempts/${started[1]}/submit`).send(submitBody(1000)).expect(200);
      const third = await bo.post(`/api/attempts/${started[2]}/submit`).send(submitBody(1000));
      expect(third.status).toBe(429);
      expect(third.body.error.message).toMatch(/2 submissions in the last hour/);
      expect((await bo.get(`/api/attempts/${started[2]}`).expect(200)).body.attempt.status).toBe('running');
    } finally {
      await limited.close();
    }
  });
});
