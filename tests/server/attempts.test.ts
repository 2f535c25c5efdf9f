import { and, eq, sql } from 'drizzle-orm';
import fc from 'fast-check';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { AttemptBootstrap, CarInput } from '../../shared/api/attempts.ts';
import { forgetSetups } from '../../server/attempts/events.ts';
import { setupAfter } from '../../server/attempts/rerun-cursor.ts';
import { testOfSetup } from '../../server/live/board.ts';
import { DIAGNOSTIC_TESTS } from '../../shared/scenario.ts';
import { faultOps } from '../../sim/faults.ts';
import { assignments, attemptEvents, attempts, pendingInjections } from '../../server/db/schema.ts';
import { answerKeyFound, assignmentId, benchModel, leads, numbered, pileRamp, scenarioId, startEngine } from './attempts-bench.ts';
import { signIn, startTestApp, type Agent, type TestApp } from './support.ts';

// Demo school: the day class has Ada, Bo, Cyrus, Dalia and Eino (taught by Rune
// Okafor-Lind); the evening class has Faye, Gus and Hana (Tamsin Vasquez-Hale).
const ADA = 'ada.brightwater@cindervalley.example';
const BO = 'bo.castellane@cindervalley.example';
const DALIA = 'dalia.fenwright@cindervalley.example';
const FAYE = 'faye.tolliver@cindervalley.example';
const DAY_INSTRUCTOR = 'r.okafor-lind@cindervalley.example';
const EVENING_INSTRUCTOR = 't.vasquez-hale@cindervalley.example';
const ADMIN = 'admin@cindervalley.example';

let t: TestApp;
let ada: Agent;
let week1: number;
let boot: AttemptBootstrap;

beforeAll(async () => {
  t = await startTestApp();
  ada = await signIn(t.app, ADA);
  week1 = await assignmentId(t.ctx, 'Week 1: no-charge complaint');
  const res = await ada.post('/api/attempts').send({ assignmentId: week1 });
  expect(res.status).toBe(201);
  boot = res.body as AttemptBootstrap;
});
afterAll(async () => {
  await t.close();
});

describe('starting an attempt', () => {
  it('starts an assigned attempt with a seed and the car to simulate, compiled: no fault list', async () => {
    expect(boot.attempt).toMatchObject({ mode: 'assigned', status: 'running', assignmentId: week1, lastSeq: 0, showCurveAfter: true, showFeedbackAfter: true });
    expect(Number.isInteger(boot.attempt.seed)).toBe(true);
    expect(boot.attempt.seed).toBeGreaterThanOrEqual(0);
    expect(boot.attempt.seed).toBeLessThan(2 ** 31);
    expect(boot.events).toEqual([]);
    expect(boot.result).toBeNull();
    expect(boot).not.toHaveProperty('sealedFaults');
    expect(boot).not.toHaveProperty('benchKey');
    expect(boot.scenario.title).toBeTruthy();
    expect(boot.scenario.tests.map((x) => x.test)).toEqual([...DIAGNOSTIC_TESTS]);
    expect(boot.scenario.diagnosisChoices.length).toBeGreaterThanOrEqual(3);
    expect(boot.scenario.diagnosisChoices.every((c) => c.label.length > 0)).toBe(true);
    // The week 1 car has an open field: the car the bench runs has it, as parameters, from the first moment.
    const { params, changes } = benchModel(boot);
    expect(params.alternator.brushResistanceOhm).toBeGreaterThan(1e5);
    expect(changes).toEqual([]);
    expect(params.label).toBe(boot.scenario.vehicle.name);
    const [row] = await t.ctx.db.select({ seed: attempts.seed, userId: attempts.userId }).from(attempts).where(eq(attempts.id, boot.attempt.id));
    expect(row?.seed).toBe(boot.attempt.seed);
  });

  it('never lets the answer key reach the student before submission', async () => {
    expect(answerKeyFound(boot)).toEqual([]);
    const again = await ada.get(`/api/attempts/${boot.attempt.id}`).expect(200);
    expect(answerKeyFound(again.body)).toEqual([]);
    const posted = await ada.post(`/api/attempts/${boot.attempt.id}/events`).send({ events: numbered(leads(0, 'battery-pos', 'battery-neg'), 1) }).expect(200);
    expect(answerKeyFound(posted.body)).toEqual([]);
    const mine = await ada.get('/api/attempts/mine').expect(200);
    expect(answerKeyFound(mine.body)).toEqual([]);
    const bad = await ada.post(`/api/attempts/${boot.attempt.id}/events`).send({ events: [{ seq: 1, event: { kind: 'pile', atMs: 0, dial01: 7 } }] });
    expect(bad.status).toBe(400);
    expect(answerKeyFound(bad.body)).toEqual([]);
  });

  it('starts a practice run of a published scenario', async () => {
    const id = await scenarioId(t.ctx, 'healthy-control-corvane-linden');
    const res = await ada.post('/api/attempts').send({ scenarioId: id, mode: 'practice' }).expect(201);
    expect(res.body.attempt).toMatchObject({ mode: 'practice', assignmentId: null, status: 'running' });
    expect(answerKeyFound(res.body)).toEqual([]);
  });

  it('refuses a student outside the class with 403', async () => {
    const faye = await signIn(t.app, FAYE);
    const res = await faye.post('/api/attempts').send({ assignmentId: week1 }).expect(403);
    expect(res.body.error.message).toBe('This assignment is not yours');
  });

  it('refuses an assignment that has not opened, or is past due, with 409 naming assignmentId', async () => {
    const week3 = await assignmentId(t.ctx, 'Week 3: failing bulbs');
    const early = await ada.post('/api/attempts').send({ assignmentId: week3 }).expect(409);
    expect(early.body.error).toMatchObject({ message: 'This assignment has not opened yet', field: 'assignmentId' });

    const [day] = await t.ctx.db
      .select({ classId: assignments.classId, versionId: assignments.scenarioVersionId })
      .from(assignments)
      .where(eq(assignments.id, week1));
    const day0 = Date.now() - 10 * 86_400_000;
    const [late] = await t.ctx.db
      .insert(assignments)
      .values({ classId: day!.classId, scenarioVersionId: day!.versionId, title: 'Closed last week', opensAt: new Date(day0), dueAt: new Date(day0 + 86_400_000) })
      .returning({ id: assignments.id });
    const res = await ada.post('/api/attempts').send({ assignmentId: late!.id }).expect(409);
    expect(res.body.error).toMatchObject({ message: 'This assignment is past its due date', field: 'assignmentId' });
  });

  it('stops at the number of attempts allowed, even when starts race', async () => {
    const week2 = await assignmentId(t.ctx, 'Week 2: dim lights and radio whine'); // 2 attempts allowed
    const dalia = await signIn(t.app, DALIA);
    const results = await Promise.all([1, 2, 3].map(() => dalia.post('/api/attempts').send({ assignmentId: week2 })));
    expect(results.map((r) => r.status).sort()).toEqual([201, 201, 409]);
    const refused = results.find((r) => r.status === 409)!;
    expect(refused.body.error.message).toBe('All 2 attempts have been used');
    const [count] = await t.ctx.db
      .select({ n: sql<number>`count(*)::int` })
      .from(attempts)
      .where(and(eq(attempts.assignmentId, week2)));
    expect(count?.n).toBe(2);
  });

  it('answers 400 naming the field for a malformed start, and 404 for an unknown assignment', async () => {
    const res = await ada.post('/api/attempts').send({ scenarioId: 1, mode: 'exam' }).expect(400);
    expect(res.body.error.field).toBe('mode');
    const none = await ada.post('/api/attempts').send({}).expect(400);
    expect(none.body.error.field).toBe('scenarioId');
    const both = await ada.post('/api/attempts').send({ assignmentId: week1, scenarioId: 1, mode: 'practice' }).expect(400);
    expect(both.body.error.field).toBe('assignmentId');
    const text = await ada.post('/api/attempts').send({ assignmentId: 'one' }).expect(400);
    expect(text.body.error.message).toBe('assignmentId: assignmentId must be a number');
    await ada.post('/api/attempts').send({ assignmentId: 999_999 }).expect(404);
  });

  it('lets only students start attempts', async () => {
    const instructor = await signIn(t.app, DAY_INSTRUCTOR);
    await instructor.post('/api/attempts').send({ assignmentId: week1 }).expect(403);
  });
});

describe('the event log', () => {
  let id: number;
  beforeAll(async () => {
    const res = await ada.post('/api/attempts').send({ assignmentId: week1 }).expect(201);
    id = res.body.attempt.id;
  });

  const script = [...leads(0, 'battery-pos', 'battery-neg'), ...startEngine(1000, 2000), { kind: 'clamp' as const, atMs: 6000, conductor: 'bplus-cable' as const, arrow: 'toward-battery' as const }, ...pileRamp(8000, 4, 0.1)];

  const count = async (attemptId: number) =>
    (await t.ctx.db.select({ n: sql<number>`count(*)::int` }).from(attemptEvents).where(eq(attemptEvents.attemptId, attemptId)))[0]?.n;

  it('stores a batch once when it is sent again', async () => {
    const batch = { events: numbered(script) };
    const first = await ada.post(`/api/attempts/${id}/events`).send(batch).expect(200);
    expect(first.body).toEqual({ lastSeq: script.length, stored: script.length });
    const retry = await ada.post(`/api/attempts/${id}/events`).send(batch).expect(200);
    expect(retry.body).toEqual({ lastSeq: script.length, stored: 0 });
    expect(await count(id)).toBe(script.length);
    const [row] = await t.ctx.db
      .select({ lastSeq: attempts.lastSeq, simTimeMs: attempts.simTimeMs, currentTest: attempts.currentTest })
      .from(attempts)
      .where(eq(attempts.id, id));
    // Clamp on B+, engine running and the pile loaded: the output test.
    expect(row).toEqual({ lastSeq: script.length, simTimeMs: 11000, currentTest: 'output' });
    const got = await ada.get(`/api/attempts/${id}`).expect(200);
    expect(got.body.events).toEqual(numbered(script));
    expect(got.body.attempt.lastSeq).toBe(script.length);
  });

  it('stores each event once when the same batch arrives several times at once', async () => {
    const other = await ada.post('/api/attempts').send({ assignmentId: week1 }).expect(201);
    const otherId = other.body.attempt.id as number;
    const batch = { events: numbered(script) };
    const answers = await Promise.all([1, 2, 3, 4].map(() => ada.post(`/api/attempts/${otherId}/events`).send(batch)));
    expect(answers.every((a) => a.status === 200)).toBe(true);
    expect(answers.reduce((n, a) => n + (a.body.stored as number), 0)).toBe(script.length);
    expect(await count(otherId)).toBe(script.length);
  });

  it('ends with lastSeq past every batch when later batches finish first (it never moves back)', async () => {
    const practice = await scenarioId(t.ctx, 'healthy-control-corvane-linden');
    const all = numbered(script);
    const third = Math.ceil(all.length / 3);
    const batches = [all.slice(0, third), all.slice(third, 2 * third), all.slice(2 * third)];
    for (let round = 0; round < 4; round++) {
      const started = await ada.post('/api/attempts').send({ scenarioId: practice, mode: 'practice' }).expect(201);
      const aid = started.body.attempt.id as number;
      // All three at once, the last first: whichever order they finish in, the row only moves forward.
      const answers = await Promise.all([...batches].reverse().map((events) => ada.post(`/api/attempts/${aid}/events`).send({ events })));
      expect(answers.map((a) => a.status)).toEqual([200, 200, 200]);
      expect(answers.reduce((n, a) => n + (a.body.stored as number), 0)).toBe(all.length);
      const [row] = await t.ctx.db.select({ lastSeq: attempts.lastSeq, simTimeMs: attempts.simTimeMs, currentTest: attempts.currentTest }).from(attempts).where(eq(attempts.id, aid));
      // The last to finish saw everything stored before it; a resend of nothing settles any that finished early.
      const settle = await ada.post(`/api/attempts/${aid}/events`).send({ events: all.slice(-1) }).expect(200);
      expect(settle.body).toEqual({ lastSeq: all.length, stored: 0 });
      const [after] = await t.ctx.db.select({ lastSeq: attempts.lastSeq, simTimeMs: attempts.simTimeMs, currentTest: attempts.currentTest }).from(attempts).where(eq(attempts.id, aid));
      expect(after).toEqual({ lastSeq: all.length, simTimeMs: 11000, currentTest: 'output' });
      expect(row!.lastSeq).toBeLessThanOrEqual(all.length);
      expect(await count(aid)).toBe(all.length);
    }
  });

  it('stores events after a gap, and counts lastSeq only as far as there is no gap', async () => {
    const fresh = await ada.post('/api/attempts').send({ scenarioId: await scenarioId(t.ctx, 'healthy-control-corvane-linden'), mode: 'practice' }).expect(201);
    const fid = fresh.body.attempt.id as number;
    const all = numbered(script);
    const a = await ada.post(`/api/attempts/${fid}/events`).send({ events: all.slice(0, 2) }).expect(200);
    expect(a.body).toEqual({ lastSeq: 2, stored: 2 });
    const b = await ada.post(`/api/attempts/${fid}/events`).send({ events: all.slice(4, 6) }).expect(200);
    expect(b.body).toEqual({ lastSeq: 2, stored: 2 });
    const c = await ada.post(`/api/attempts/${fid}/events`).send({ events: all.slice(2, 4) }).expect(200);
    expect(c.body).toEqual({ lastSeq: 6, stored: 2 });
  });

  it('names the set-up the same whether it is carried on from the last batch or rebuilt from the stored log', async () => {
    const practice = await scenarioId(t.ctx, 'healthy-control-corvane-linden');
    // Through several tests: battery at rest, running, loaded, a drop across the B+ side, key off.
    const tour: CarInput[] = [
      ...leads(0, 'battery-pos', 'battery-neg'),
      ...startEngine(1000, 2000),
      { kind: 'clamp', atMs: 5000, conductor: 'bplus-cable', arrow: 'toward-battery' },
      ...pileRamp(6000, 3, 0.15),
      { kind: 'pile', atMs: 10_000, dial01: 0 },
      ...leads(11_000, 'battery-pos', 'alt-bplus'),
      ...leads(13_000, 'alt-bplus', 'alt-case'),
      { kind: 'key', atMs: 15_000, position: 'off' },
    ];
    const all = numbered(tour);
    const expected = (through: number) => testOfSetup(setupAfter(all.filter((e) => e.seq <= through).map((e) => e.event)).controls, { engine: setupAfter(all.filter((e) => e.seq <= through).map((e) => e.event)).engineGuess });
    // A second server process on the same database: its caches are its own, so its batches leave this one's set-up stale.
    const other = await startTestApp({}, t.databaseUrl);
    const adaThere = await signIn(other.app, ADA);
    try {
      await fc.assert(
        fc.asyncProperty(
          // Cut points (batches), one batch sent late (a gap, then its fill), and who sends each batch: this process, this process with its cache lost, or the other process.
          fc.uniqueArray(fc.integer({ min: 1, max: all.length - 1 }), { maxLength: 6 }),
          fc.nat({ max: 6 }),
          fc.array(fc.constantFrom('here', 'lost', 'other'), { minLength: 8, maxLength: 8 }),
          async (cuts, lateIndex, via) => {
            const bounds = [0, ...[...cuts].sort((a, b) => a - b), all.length];
            const batches = bounds.slice(1).map((end, i) => all.slice(bounds[i], end));
            if (lateIndex < batches.length - 1) batches.push(...batches.splice(lateIndex, 1));
            const started = await ada.post('/api/attempts').send({ scenarioId: practice, mode: 'practice' }).expect(201);
            const aid = started.body.attempt.id as number;
            for (const [i, batch] of batches.entries()) {
              if (via[i] === 'lost') forgetSetups(t.ctx.db);
              const sender = via[i] === 'other' ? adaThere : ada;
              const res = await sender.post(`/api/attempts/${aid}/events`).send({ events: batch }).expect(200);
              const [row] = await t.ctx.db.select({ lastSeq: attempts.lastSeq, currentTest: attempts.currentTest }).from(attempts).where(eq(attempts.id, aid));
              expect(row!.lastSeq).toBe(res.body.lastSeq);
              expect(res.body.stored).toBe(batch.length);
              expect(row!.currentTest).toBe(row!.lastSeq === 0 ? null : expected(row!.lastSeq));
            }
            expect((await t.ctx.db.select({ lastSeq: attempts.lastSeq }).from(attempts).where(eq(attempts.id, aid)))[0]!.lastSeq).toBe(all.length);
          },
        ),
        { numRuns: 16 },
      );
    } finally {
      await other.close();
    }
    // The tour does pass through several set-ups, so the comparison above is not of one constant.
    const seen = new Set(all.map((e) => expected(e.seq)));
    for (const test of ['battery-ocv', 'regulated-voltage', 'output', 'voltage-drop-positive', 'ripple'] as const) expect(seen).toContain(test);
  });

  it('bootstraps with the whole stored log however much of it this process read before: after each batch, past a gap and its fill, and from another process', async () => {
    const practice = await scenarioId(t.ctx, 'healthy-control-corvane-linden');
    const all = numbered([...leads(0, 'battery-pos', 'battery-neg'), ...startEngine(1000, 2000), ...pileRamp(6000, 4, 0.1), { kind: 'key', atMs: 12_000, position: 'off' }]);
    const other = await startTestApp({}, t.databaseUrl);
    try {
      const adaThere = await signIn(other.app, ADA);
      await fc.assert(
        fc.asyncProperty(
          fc.uniqueArray(fc.integer({ min: 1, max: all.length - 1 }), { maxLength: 5 }),
          fc.nat({ max: 5 }),
          fc.array(fc.boolean(), { minLength: 7, maxLength: 7 }),
          async (cuts, lateIndex, readThere) => {
            const bounds = [0, ...[...cuts].sort((a, b) => a - b), all.length];
            const batches = bounds.slice(1).map((end, i) => all.slice(bounds[i], end));
            if (lateIndex < batches.length - 1) batches.push(...batches.splice(lateIndex, 1));
            const aid = (await ada.post('/api/attempts').send({ scenarioId: practice, mode: 'practice' }).expect(201)).body.attempt.id as number;
            for (const [i, batch] of batches.entries()) {
              await ada.post(`/api/attempts/${aid}/events`).send({ events: batch }).expect(200);
              const reader = readThere[i] ? adaThere : ada;
              const boot = (await reader.get(`/api/attempts/${aid}`).expect(200)).body as AttemptBootstrap;
              const stored = await t.ctx.db.select({ seq: attemptEvents.seq }).from(attemptEvents).where(eq(attemptEvents.attemptId, aid)).orderBy(attemptEvents.seq);
              expect(boot.events.map((e) => e.seq)).toEqual(stored.map((r) => r.seq));
              expect(boot.events).toEqual(all.filter((e) => stored.some((r) => r.seq === e.seq)));
            }
          },
        ),
        { numRuns: 12 },
      );
    } finally {
      await other.close();
    }
  });

  it('answers 400 naming the path of a bad event, and stores nothing of that batch', async () => {
    const before = await count(id);
    const events = numbered([...leads(20_000, 'battery-pos', 'battery-neg'), { kind: 'rpm', atMs: 20_000, rpm: 1500 }, { kind: 'pile', atMs: 20_000, dial01: 1.5 }], 100);
    const res = await ada.post(`/api/attempts/${id}/events`).send({ events }).expect(400);
    expect(res.body.error.field).toBe('events.3.event.dial01');
    expect(res.body.error.message).toMatch(/^events\.3\.event\.dial01: /);

    const cases: [unknown, string][] = [
      [{ seq: 200, event: { kind: 'rpm', atMs: 1, rpm: 9000 } }, 'events.0.event.rpm'],
      [{ seq: 200, event: { kind: 'rpm', atMs: 1.5, rpm: 900 } }, 'events.0.event.atMs'],
      [{ seq: 200, event: { kind: 'lead', atMs: 1, which: 'green', point: 'battery-pos' } }, 'events.0.event.which'],
      [{ seq: 200, event: { kind: 'clamp', atMs: 1, conductor: 'fuel-line', arrow: 'toward-battery' } }, 'events.0.event.conductor'],
      [{ seq: 0, event: { kind: 'key', atMs: 1, position: 'on' } }, 'events.0.seq'],
      [{ seq: 200, event: { kind: 'jump', atMs: 1 } }, 'events.0.event.kind'],
      [{ seq: 200, event: { kind: 'accessory', atMs: 1, id: 'jet-engine', on: true } }, 'events.0.event.id'],
      // A bench may not log faults at all, nor a change of the car that is no instructor's injection.
      [{ seq: 200, event: { kind: 'fault-clear', atMs: 1, faultId: 'field-open-1' } }, 'events.0.event.kind'],
      [{ seq: 200, event: { kind: 'fault-inject', atMs: 1, fault: { id: 'mine', kind: 'belt-slip', severity01: 1, onsetS: 0 } } }, 'events.0.event.kind'],
      [{ seq: 200, event: { kind: 'change-apply', atMs: 30_000, change: { id: 'mine', onsetS: 30, intermittent: null, ops: faultOps({ kind: 'belt-slip', severity01: 1 }) } } }, 'events.0.event'],
      [{ seq: 200, event: { kind: 'change-clear', atMs: 30_000, changeId: 'c1' } }, 'events.0.event'],
      [{ seq: 200, event: { kind: 'reading', atMs: 30_000, reading: { id: 'r', test: 'output', quantity: 'current', value: 1, unit: 'A', atMs: 20_000, where: '' } } }, 'events.0.event.reading.atMs'],
    ];
    for (const [event, field] of cases) {
      const r = await ada.post(`/api/attempts/${id}/events`).send({ events: [event] });
      expect(r.status, field).toBe(400);
      expect(r.body.error.field, JSON.stringify(event)).toBe(field);
    }
    const empty = await ada.post(`/api/attempts/${id}/events`).send({ events: [] }).expect(400);
    expect(empty.body.error.field).toBe('events');
    const tooMany = await ada
      .post(`/api/attempts/${id}/events`)
      .send({ events: Array.from({ length: 501 }, (_, i) => ({ seq: 1000 + i, event: { kind: 'clamp-zero', atMs: 30_000 } })) })
      .expect(400);
    expect(tooMany.body.error.field).toBe('events');
    expect(await count(id)).toBe(before);
  });

  it('takes a change that logs an instructor injection delivered to the bench, marked as the instructor’s', async () => {
    const action = (faultId: string) => ({ type: 'inject' as const, faultId, kind: 'belt-slip' as const, severity01: 0.5, delayS: 0, intermittent: null });
    const [inj] = await t.ctx.db.insert(pendingInjections).values({ attemptId: id, action: action('live-1') }).returning({ id: pendingInjections.id });
    const faultId = `live-${inj!.id}`;
    await t.ctx.db.update(pendingInjections).set({ action: action(faultId) }).where(eq(pendingInjections.id, inj!.id));
    const change = { id: faultId, onsetS: 12, intermittent: null, ops: faultOps({ kind: 'belt-slip', severity01: 0.5 }) };
    // Not delivered to the bench yet: nothing to log.
    const undelivered = await ada.post(`/api/attempts/${id}/events`).send({ events: [{ seq: 12, event: { kind: 'change-apply', atMs: 12_000, change } }] });
    expect(undelivered.status).toBe(400);
    await t.ctx.db.update(pendingInjections).set({ deliveredAt: new Date(), deliveredSimMs: 11_000 }).where(eq(pendingInjections.id, inj!.id));
    const otherChange = await ada
      .post(`/api/attempts/${id}/events`)
      .send({ events: [{ seq: 12, event: { kind: 'change-apply', atMs: 12_000, change: { ...change, ops: faultOps({ kind: 'belt-slip', severity01: 0.1 }) } } }] });
    expect(otherChange.status).toBe(400);
    await ada.post(`/api/attempts/${id}/events`).send({ events: [{ seq: 12, event: { kind: 'change-apply', atMs: 12_000, change } }] }).expect(200);
    const [stored] = await t.ctx.db
      .select({ source: attemptEvents.source })
      .from(attemptEvents)
      .where(and(eq(attemptEvents.attemptId, id), eq(attemptEvents.seq, 12)));
    expect(stored?.source).toBe('instructor');
    const [applied] = await t.ctx.db.select({ appliedAt: pendingInjections.appliedAt }).from(pendingInjections).where(eq(pendingInjections.id, inj!.id));
    expect(applied?.appliedAt).not.toBeNull();

    // Reloaded, the bench gets the change it logged back, as parameter operations: no kind, no severity.
    const reload = await ada.get(`/api/attempts/${id}`).expect(200);
    expect(answerKeyFound(reload.body)).toEqual([]);
    expect(reload.body.events.find((e: { seq: number }) => e.seq === 12)).toEqual({ seq: 12, event: { kind: 'change-apply', atMs: 12_000, change } });
  });

  it('refuses a batch whose sim time runs back before the stored log with a 409 naming the event, so a mistake cannot be erased after the fact', async () => {
    const res = await ada.post('/api/attempts').send({ scenarioId: await scenarioId(t.ctx, 'healthy-control-corvane-linden'), mode: 'practice' }).expect(201);
    const id = res.body.attempt.id as number;
    await ada.post(`/api/attempts/${id}/events`).send({ events: numbered([...leads(5_000, 'battery-pos', 'battery-neg'), { kind: 'pile', atMs: 8_000, dial01: 0.9 }]) }).expect(200);
    // The attack: a later batch set at 6 s and 6.5 s, meant to go before the pile turned up at 8 s.
    const back = await ada.post(`/api/attempts/${id}/events`).send({ events: numbered([{ kind: 'pile', atMs: 6_000, dial01: 0 }, { kind: 'pile', atMs: 6_500, dial01: 0 }], 4) }).expect(409);
    expect(back.body.error.field).toBe('events.0.event.atMs');
    expect(back.body.error.message).toContain('event 4 at 6000 ms runs back before event 3 at 8000 ms');
    const stored = await t.ctx.db.select({ seq: attemptEvents.seq }).from(attemptEvents).where(eq(attemptEvents.attemptId, id));
    expect(stored.map((r) => r.seq).sort((a, b) => a - b)).toEqual([1, 2, 3]);
  });

  it('answers 409 to events for a submitted attempt', async () => {
    const done = await ada.post('/api/attempts').send({ scenarioId: await scenarioId(t.ctx, 'healthy-control-corvane-linden'), mode: 'practice' }).expect(201);
    const did = done.body.attempt.id as number;
    await ada.post(`/api/attempts/${did}/submit`).send({ atMs: 0, diagnosis: { verdicts: [], faultKind: 'none', notes: '' } }).expect(200);
    const res = await ada.post(`/api/attempts/${did}/events`).send({ events: numbered(leads(0, 'battery-pos', 'battery-neg')) }).expect(409);
    expect(res.body.error.message).toMatch(/submitted/);
  });
});

describe('who may see an attempt', () => {
  it('gives another student 403 on every route of someone else’s attempt', async () => {
    const bo = await signIn(t.app, BO);
    const path = `/api/attempts/${boot.attempt.id}`;
    await bo.get(path).expect(403);
    await bo.post(`${path}/events`).send({ events: numbered(leads(0, 'battery-pos', 'battery-neg'), 50) }).expect(403);
    await bo.post(`${path}/submit`).send({ atMs: 0, diagnosis: { verdicts: [], faultKind: 'none', notes: '' } }).expect(403);
    const faye = await signIn(t.app, FAYE);
    await faye.get(path).expect(403);
    await bo.get('/api/attempts/999999').expect(404);
  });

  it('lets the class’s instructor and the admin read it, but not an instructor of another class', async () => {
    const path = `/api/attempts/${boot.attempt.id}`;
    const day = await signIn(t.app, DAY_INSTRUCTOR);
    const read = await day.get(path).expect(200);
    expect(read.body.attempt.id).toBe(boot.attempt.id);
    await day.post(`${path}/events`).send({ events: numbered(leads(0, 'battery-pos', 'battery-neg'), 60) }).expect(403);
    const admin = await signIn(t.app, ADMIN);
    await admin.get(path).expect(200);
    const evening = await signIn(t.app, EVENING_INSTRUCTOR);
    await evening.get(path).expect(403);
  });

  it('lists only the student’s own attempts in “my attempts”', async () => {
    const mine = await ada.get('/api/attempts/mine').expect(200);
    const ids = (mine.body.attempts as { id: number }[]).map((a) => a.id);
    expect(ids).toContain(boot.attempt.id);
    const owners = await t.ctx.db.select({ userId: attempts.userId }).from(attempts).where(sql`${attempts.id} in ${ids}`);
    expect(new Set(owners.map((o) => o.userId)).size).toBe(1);
    const row = (mine.body.attempts as { id: number }[]).find((a) => a.id === boot.attempt.id);
    expect(row).toMatchObject({ mode: 'assigned', status: 'running', assignmentTitle: 'Week 1: no-charge complaint', grade: null, submittedAt: null });
    const bo = await signIn(t.app, BO);
    const theirs = await bo.get('/api/attempts/mine').expect(200);
    expect((theirs.body.attempts as { id: number }[]).map((a) => a.id)).not.toContain(boot.attempt.id);
  });
});
