/**
 * Two server processes on one database, as behind a load balancer: the
 * student's bench talks to one, the instructor to the other, and LISTEN/NOTIFY
 * carries the news between them.
 */
import { eq } from 'drizzle-orm';
import pg from 'pg';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { pendingInjections } from '../../server/db/schema.ts';
import { benchInjectionSchema, boardAttemptSchema, liveFaultId } from '../../shared/api/live.ts';
import { faultOps } from '../../sim/faults.ts';
import { startTestApp, type TestApp } from './support.ts';
import { httpSignIn, instructor, makeAttempt, makeClass, openStream, spawnServer, students, type ClassFixture, type ServerProcess } from './live-fixtures.ts';

const SECRET = 'two-process-test-secret-0123456789';
let t: TestApp;
let one: ServerProcess;
let two: ServerProcess;
let fx: ClassFixture;

beforeAll(async () => {
  t = await startTestApp({ SESSION_SECRET: SECRET });
  fx = await makeClass(t.ctx.db, { students: 1 });
  [one, two] = await Promise.all([spawnServer(t.databaseUrl, { SESSION_SECRET: SECRET }), spawnServer(t.databaseUrl, { SESSION_SECRET: SECRET })]);
});
afterAll(async () => {
  await Promise.all([one?.stop(), two?.stop()]);
  await t.close();
});

describe('two server processes', () => {
  it('an injection made on one process reaches the bench on the other, and its logging reaches the board back', async () => {
    expect(one.url).not.toBe(two.url);
    const attemptId = await makeAttempt(t.ctx.db, fx, fx.studentIds[0]!);
    const student = await httpSignIn(one.url, students[0]!.email);
    const teacher = await httpSignIn(two.url, instructor.email);

    const bench = await openStream(student, `/api/live/attempts/${attemptId}/stream`);
    await bench.next((m) => m.event === 'status');
    const board = await openStream(teacher, `/api/live/classes/${fx.classId}/stream`);
    await board.next((m) => m.event === 'snapshot');

    const sentAt = Date.now();
    const made = await teacher.post(`/api/live/attempts/${attemptId}/inject`, { kind: 'fusible-link-open', severity01: 1 });
    expect(made.status, made.text).toBe(201);
    const injectionId = (made.body as { injection: { injectionId: number } }).injection.injectionId;
    const msg = benchInjectionSchema.parse((await bench.next((m) => m.event === 'injection', 3_000)).data);
    // The issue asks for the bench to have it within a second.
    expect(Date.now() - sentAt).toBeLessThan(1_000);
    if (msg.type !== 'inject') throw new Error('expected an inject');
    expect(msg.change).toMatchObject({ id: liveFaultId(injectionId), ops: faultOps({ kind: 'fusible-link-open', severity01: 1 }) });

    const logged = await student.post(`/api/attempts/${attemptId}/events`, {
      events: [{ seq: 1, event: { kind: 'change-apply', atMs: 4_000, change: { ...msg.change, onsetS: 4 + msg.change.onsetS } } }],
    });
    expect(logged.status, logged.text).toBe(200);
    const applied = await board.next((m) => {
      if (m.event !== 'attempt') return false;
      const a = boardAttemptSchema.parse(m.data);
      return a.attemptId === attemptId && a.injections.some((i) => i.injectionId === injectionId && i.appliedAt !== null);
    }, 5_000);
    expect(boardAttemptSchema.parse(applied.data).lastSeq).toBe(1);
    bench.close();
    board.close();
  });

  it('a bench that reconnects to the other process receives what was injected while it was away', async () => {
    const attemptId = await makeAttempt(t.ctx.db, fx, fx.studentIds[0]!);
    const student = await httpSignIn(one.url, students[0]!.email);
    const teacher = await httpSignIn(two.url, instructor.email);
    const bench = await openStream(student, `/api/live/attempts/${attemptId}/stream`);
    await bench.next((m) => m.event === 'status');
    bench.close();

    const made = await teacher.post(`/api/live/attempts/${attemptId}/inject`, { kind: 'diode-open', severity01: 1, delayS: 5 });
    expect(made.status).toBe(201);
    // Back, on the instructor's process this time.
    const studentThere = await httpSignIn(two.url, students[0]!.email);
    const again = await openStream(studentThere, `/api/live/attempts/${attemptId}/stream`);
    const msg = benchInjectionSchema.parse((await again.next((m) => m.event === 'injection', 3_000)).data);
    if (msg.type !== 'inject') throw new Error('expected an inject');
    expect(msg.change).toMatchObject({ onsetS: 5, ops: faultOps({ kind: 'diode-open', severity01: 1 }) });
    again.close();
  });

  it('when a process loses its notification connection it reconnects and delivers what came meanwhile', async () => {
    const attemptId = await makeAttempt(t.ctx.db, fx, fx.studentIds[0]!);
    const student = await httpSignIn(one.url, students[0]!.email);
    const teacher = await httpSignIn(two.url, instructor.email);
    const bench = await openStream(student, `/api/live/attempts/${attemptId}/stream`);
    await bench.next((m) => m.event === 'status');

    // Cut every listening connection (both processes) from the database side.
    const admin = new pg.Client({ connectionString: t.databaseUrl });
    await admin.connect();
    try {
      const cut = await admin.query<{ ok: boolean }>(
        `select pg_terminate_backend(pid) as ok from pg_stat_activity where datname = current_database() and query ilike 'LISTEN %' and pid <> pg_backend_pid()`,
      );
      expect(cut.rows.length).toBeGreaterThanOrEqual(1);
    } finally {
      await admin.end();
    }
    const made = await teacher.post(`/api/live/attempts/${attemptId}/inject`, { kind: 'field-open', severity01: 0.5 });
    expect(made.status).toBe(201);
    const injectionId = (made.body as { injection: { injectionId: number } }).injection.injectionId;
    const msg = benchInjectionSchema.parse((await bench.next((m) => m.event === 'injection', 8_000)).data);
    expect(msg.injectionId).toBe(injectionId);
    const [row] = await t.ctx.db.select({ appliedAt: pendingInjections.appliedAt }).from(pendingInjections).where(eq(pendingInjections.id, injectionId));
    expect(row!.appliedAt).toBeNull();
    bench.close();
  });
});
