/**
 * The board's re-run cache against a re-run from the start. The cache loads
 * only the events it has not seen and carries the model forward; whatever
 * order the batches come in, what it shows must equal running every stored
 * event from the start, as the replay and the grader do. One board refresh
 * costs a fixed number of queries however many attempts it covers.
 */
import { modelEvents } from '../../shared/api/attempts.ts';
import { eq } from 'drizzle-orm';
import { drizzle } from 'drizzle-orm/node-postgres';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { connect, type Database, type Db } from '../../server/db/client.ts';
import * as schema from '../../server/db/schema.ts';
import { attemptEvents, attempts } from '../../server/db/schema.ts';
import { loadAttemptRun } from '../../server/attempts/rerun-inputs.ts';
import { boardAttempts, createBoardRuns, liveReadings, testOfSetup, type BoardRuns } from '../../server/live/board.ts';
import { createInjection } from '../../server/live/injections.ts';
import type { InputEvent } from '../../sim/inputs.ts';
import { readMeters } from '../../sim/instruments.ts';
import { stateAt } from '../../sim/replay.ts';
import { DT_MS } from '../../sim/step.ts';
import { startTestApp, type TestApp } from './support.ts';
import { makeAttempt, makeClass, type ClassFixture } from './live-fixtures.ts';

let t: TestApp;
let fx: ClassFixture;
let counted: Database;
let countingDb: Db;
let queries = 0;
const failures: unknown[] = [];

beforeAll(async () => {
  t = await startTestApp();
  fx = await makeClass(t.ctx.db, { students: 2 });
  counted = connect(t.databaseUrl, 4);
  countingDb = drizzle(counted.pool, { schema, logger: { logQuery: () => void queries++ } });
});
afterAll(async () => {
  await counted.close();
  await t.close();
});

function newRuns(): BoardRuns {
  return createBoardRuns((message, err) => failures.push({ message, err }));
}

/** Stores a batch as the event route does: rows by seq, lastSeq up to the first gap, sim time the latest event's. */
async function store(attemptId: number, batch: { seq: number; event: InputEvent }[]) {
  await t.ctx.db
    .insert(attemptEvents)
    .values(batch.map(({ seq, event }) => ({ attemptId, seq, simTimeMs: event.atMs, kind: event.kind, payload: event })));
  const rows = await t.ctx.db.select({ seq: attemptEvents.seq, atMs: attemptEvents.simTimeMs }).from(attemptEvents).where(eq(attemptEvents.attemptId, attemptId));
  const seqs = new Set(rows.map((r) => r.seq));
  let lastSeq = 0;
  while (seqs.has(lastSeq + 1)) lastSeq++;
  const simTimeMs = rows.reduce((m, r) => Math.max(m, r.atMs), 0);
  await t.ctx.db.update(attempts).set({ lastSeq, simTimeMs }).where(eq(attempts.id, attemptId));
}

/** What the board showed before it kept re-runs: every stored event run from the start, with no cache. */
async function fromTheStart(attemptId: number) {
  const run = await loadAttemptRun(t.ctx.db, attemptId);
  const events = modelEvents(run.stored.map((s) => s.event));
  const [a] = await t.ctx.db.select({ simTimeMs: attempts.simTimeMs }).from(attempts).where(eq(attempts.id, attemptId));
  const lastAtMs = run.stored.reduce((m, e) => Math.max(m, e.event.atMs), 0);
  const targetMs = Math.ceil(Math.max(a!.simTimeMs, lastAtMs) / DT_MS) * DT_MS;
  const point = stateAt(run.car.params, run.seed, events, targetMs, undefined, run.car.changes);
  const readings = readMeters(run.car.params, point.state);
  return { currentTest: testOfSetup(point.controls, readings), readings: liveReadings(readings, point.state.fusibleLinkBlown) };
}

async function board(runs: BoardRuns, ids: number[]) {
  queries = 0;
  const list = await boardAttempts(countingDb, fx.classId, ids, runs);
  return { list, queries };
}

async function expectSameAsFromTheStart(runs: BoardRuns, ids: number[]) {
  const { list } = await board(runs, ids);
  expect(list.map((a) => a.attemptId).sort()).toEqual([...ids].sort());
  for (const entry of list) {
    const fresh = await fromTheStart(entry.attemptId);
    expect(entry.readings).not.toBeNull();
    expect({ currentTest: entry.currentTest, readings: entry.readings }).toEqual(fresh);
  }
  return list;
}

const lead = (atMs: number, which: 'red' | 'black', point: 'battery-pos' | 'battery-neg'): InputEvent => ({ kind: 'lead', atMs, which, point });

describe('the board re-run cache', () => {
  it('equals a re-run from the start after every batch: in order, past a gap, a gap filled before the kept moment, and within the last step', async () => {
    const runs = newRuns();
    const a = await makeAttempt(t.ctx.db, fx, fx.studentIds[0]!, 21);
    const b = await makeAttempt(t.ctx.db, fx, fx.studentIds[1]!, 22);

    // First sight of both: one run each from the start.
    await store(a, [
      { seq: 1, event: lead(500, 'red', 'battery-pos') },
      { seq: 2, event: lead(900, 'black', 'battery-neg') },
    ]);
    await store(b, [{ seq: 1, event: { kind: 'key', atMs: 700, position: 'start' } }]);
    const first = await expectSameAsFromTheStart(runs, [a, b]);
    // The board shows the step at the latest event's time, before that event applies: the black lead is not on yet.
    expect(first.find((e) => e.attemptId === a)!.currentTest).toBeNull();
    expect(runs.stats).toMatchObject({ fullRuns: 2, carried: 0, eventsLoaded: 3 });

    // In order: only the new events are read, and the model is carried forward.
    await store(a, [
      { seq: 3, event: { kind: 'key', atMs: 1_000, position: 'start' } },
      { seq: 4, event: { kind: 'key', atMs: 3_000, position: 'on' } },
    ]);
    await store(b, [{ seq: 2, event: { kind: 'key', atMs: 2_700, position: 'on' } }]);
    const started = await expectSameAsFromTheStart(runs, [a, b]);
    expect(started.find((e) => e.attemptId === a)!.currentTest).not.toBeNull();
    expect(runs.stats).toMatchObject({ fullRuns: 2, carried: 2, eventsLoaded: 6 });

    // Past a gap (seq 5 not stored yet): seq 6 is taken in; lastSeq stays 4.
    await store(a, [{ seq: 6, event: { kind: 'pile', atMs: 5_000, dial01: 0.5 } }]);
    const gapped = await expectSameAsFromTheStart(runs, [a]);
    expect(gapped[0]!.lastSeq).toBe(4);
    expect(runs.stats).toMatchObject({ fullRuns: 2, carried: 3 });

    // The gap filled with an event before the kept moment (5,000 ms): the cache starts over.
    await store(a, [{ seq: 5, event: { kind: 'rpm', atMs: 4_000, rpm: 2_000 } }]);
    const filled = await expectSameAsFromTheStart(runs, [a]);
    expect(filled[0]!.lastSeq).toBe(6);
    // Running across the battery; the pile at 5,000 ms is the latest event and applies at the next step.
    expect(filled[0]!.currentTest).toBe('regulated-voltage');
    expect(runs.stats).toMatchObject({ fullRuns: 3, carried: 3 });

    // Off the step grid: the kept moment is 6,010 ms; an event at 6,007 ms is after its last step (6,000 ms)
    // and applies at the next step in a run from the start too, so the moment is kept.
    await store(a, [{ seq: 7, event: { kind: 'pile', atMs: 6_005, dial01: 0.8 } }]);
    await expectSameAsFromTheStart(runs, [a]);
    await store(a, [
      { seq: 8, event: { kind: 'clamp', atMs: 6_007, conductor: 'bplus-cable', arrow: 'toward-battery' } },
      { seq: 9, event: { kind: 'clamp-zero', atMs: 6_007 } },
    ]);
    await expectSameAsFromTheStart(runs, [a]);
    expect(runs.stats).toMatchObject({ fullRuns: 3, carried: 5 });

    // A batch entirely before the kept moment, and later an ordinary one.
    await store(a, [
      { seq: 10, event: { kind: 'pile', atMs: 2_000, dial01: 0.2 } },
      { seq: 11, event: lead(2_500, 'black', 'battery-neg') },
    ]);
    await expectSameAsFromTheStart(runs, [a, b]);
    await store(a, [{ seq: 12, event: { kind: 'pile', atMs: 9_000, dial01: 0 } }]);
    await store(b, [{ seq: 3, event: lead(9_500, 'red', 'battery-pos') }]);
    await expectSameAsFromTheStart(runs, [a, b]);
    expect(runs.stats).toMatchObject({ fullRuns: 4, carried: 8 });
    // Every stored event was read once, however often the board refreshed, except seq 6 of the first,
    // read again with seq 5 (the cache asks for what follows the last seq up to which it holds every event).
    expect(runs.stats.eventsLoaded).toBe(12 + 3 + 1);
    expect(failures).toEqual([]);
  });

  it('lets other work run while it carries a long stretch, and still equals a re-run from the start', async () => {
    const runs = newRuns();
    const a = await makeAttempt(t.ctx.db, fx, fx.studentIds[0]!, 23);
    await store(a, [
      { seq: 1, event: lead(0, 'red', 'battery-pos') },
      { seq: 2, event: lead(0, 'black', 'battery-neg') },
      { seq: 3, event: { kind: 'key', atMs: 1_000, position: 'start' } },
      { seq: 4, event: { kind: 'key', atMs: 3_000, position: 'on' } },
    ]);
    await expectSameAsFromTheStart(runs, [a]);
    const before = runs.stats.yields;
    // Twenty minutes later (a bench back after being offline): a long carry forward, about 0.1 s of stepping.
    await store(a, [{ seq: 5, event: { kind: 'pile', atMs: 1_200_000, dial01: 0.3 } }]);
    await expectSameAsFromTheStart(runs, [a]);
    // It let other requests in several times on the way (every few ms of stepping), not once at the end.
    expect(runs.stats.yields - before).toBeGreaterThanOrEqual(5);
    expect(runs.stats).toMatchObject({ fullRuns: 1, carried: 1 });
    expect(failures).toEqual([]);
  });

  it('costs three queries per refresh however many attempts are due, and none for events once no attempt is running', async () => {
    const runs = newRuns();
    const ids = await Promise.all([0, 1, 0, 1, 0].map((i, k) => makeAttempt(t.ctx.db, fx, fx.studentIds[i]!, 30 + k)));
    for (const [k, id] of ids.entries()) await store(id, [{ seq: 1, event: lead(100 * (k + 1), 'red', 'battery-pos') }]);
    await createInjection(t.ctx.db, ids[2]!, fx.instructorId, { kind: 'diode-open', severity01: 1, delayS: 0, intermittent: null });
    await board(runs, ids); // each attempt's re-run is now held
    for (const [k, id] of ids.entries()) {
      await store(id, [
        { seq: 2, event: lead(1_000 + k, 'black', 'battery-neg') },
        { seq: 3, event: { kind: 'accessory', atMs: 1_500, id: 'headlamps', on: false } },
      ]);
    }

    // The rows with their last activity, the unseen events, the injections.
    const { list, queries: n } = await board(runs, ids);
    expect(n).toBe(3);
    expect(list).toHaveLength(ids.length);
    expect(list.every((e) => e.lastSeq === 3 && e.lastActivityAt !== null && e.currentTest === 'battery-ocv')).toBe(true);
    expect(list.find((e) => e.attemptId === ids[2])!.injections).toMatchObject([{ kind: 'diode-open', appliedAt: null }]);
    expect(list.filter((e) => e.attemptId !== ids[2]).every((e) => e.injections.length === 0)).toBe(true);

    // An attempt of another class is not on this board, and costs nothing more.
    const other = await makeClass(t.ctx.db, { students: 1, name: 'Electrical systems, day section' });
    const outsider = await makeAttempt(t.ctx.db, other, other.studentIds[0]!);
    const mixed = await board(runs, [...ids, outsider]);
    expect(mixed.list.map((e) => e.attemptId).sort()).toEqual([...ids].sort());
    expect(mixed.queries).toBe(3);

    // Submitted: still reported (the board drops it), without readings and without an events query.
    await t.ctx.db.update(attempts).set({ status: 'submitted', submittedAt: new Date() }).where(eq(attempts.id, ids[0]!));
    const done = await board(runs, [ids[0]!]);
    expect(done.list).toMatchObject([{ attemptId: ids[0], status: 'submitted', readings: null, currentTest: null }]);
    expect(done.queries).toBe(2);
    expect(failures).toEqual([]);
  });

  it('starts over when it is told of an attempt whose log went back, and stays equal to a run from the start', async () => {
    const runs = newRuns();
    const a = await makeAttempt(t.ctx.db, fx, fx.studentIds[0]!, 41);
    await store(a, [
      { seq: 1, event: lead(500, 'red', 'battery-pos') },
      { seq: 2, event: { kind: 'key', atMs: 800, position: 'start' } },
    ]);
    await expectSameAsFromTheStart(runs, [a]);
    await t.ctx.db.delete(attemptEvents).where(eq(attemptEvents.attemptId, a));
    await store(a, [{ seq: 1, event: lead(600, 'black', 'battery-neg') }]);
    await expectSameAsFromTheStart(runs, [a]);
    expect(runs.stats).toMatchObject({ fullRuns: 2 });
    expect(failures).toEqual([]);
  });
});
