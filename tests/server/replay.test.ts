import { eq } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { attemptEvents, attempts, pendingInjections } from '../../server/db/schema.ts';
import { liveFaultId } from '../../shared/api/live.ts';
import { MARKER_KINDS, replayResponseSchema, type ReplayResponse } from '../../shared/api/replay.ts';
import type { InputEvent } from '../../sim/inputs.ts';
import { advance, runAttempt, startPoint, stateAt } from '../../sim/replay.ts';
import { DT_MS } from '../../sim/step.ts';
import { signIn, startTestApp, type TestApp } from './support.ts';
import { instructor, makeAttempt, makeClass, otherInstructor, students, type ClassFixture } from './live-fixtures.ts';

let t: TestApp;
let fx: ClassFixture;
let attemptId: number;
const SUBMITTED_AT_MS = 48_000;

/** A student's bench session: hook-up, start, hold rpm, load with the pile, an injected fault, readings. */
function benchSession(injectedFaultId: string): InputEvent[] {
  return [
    { kind: 'lead', atMs: 1_000, which: 'red', point: 'battery-pos' },
    { kind: 'lead', atMs: 1_500, which: 'black', point: 'battery-neg' },
    { kind: 'clamp', atMs: 2_000, conductor: 'bplus-cable', arrow: 'toward-battery' },
    { kind: 'key', atMs: 4_000, position: 'start' },
    { kind: 'key', atMs: 5_200, position: 'on' },
    { kind: 'rpm', atMs: 8_000, rpm: 2_000 },
    { kind: 'pile', atMs: 15_000, dial01: 0.3 },
    { kind: 'pile', atMs: 15_400, dial01: 0.6 },
    { kind: 'fault-inject', atMs: 22_000, fault: { id: injectedFaultId, kind: 'bplus-high-resistance', severity01: 0.6, onsetS: 23, intermittent: null } },
    { kind: 'pile', atMs: 30_000, dial01: 0 },
    { kind: 'rpm', atMs: 36_000, rpm: 0 },
  ];
}

beforeAll(async () => {
  t = await startTestApp();
  fx = await makeClass(t.ctx.db, { students: 2 });
  attemptId = await makeAttempt(t.ctx.db, fx, fx.studentIds[0]!, 4242);
  const [inj] = await t.ctx.db
    .insert(pendingInjections)
    .values({ attemptId, createdBy: fx.instructorId, action: { type: 'inject', faultId: 'pending', kind: 'bplus-high-resistance', severity01: 0.6, delayS: 1, intermittent: null } })
    .returning({ id: pendingInjections.id });
  const faultId = liveFaultId(inj!.id);
  await t.ctx.db
    .update(pendingInjections)
    .set({ action: { type: 'inject', faultId, kind: 'bplus-high-resistance', severity01: 0.6, delayS: 1, intermittent: null } })
    .where(eq(pendingInjections.id, inj!.id));
  const events = benchSession(faultId);
  await t.ctx.db.insert(attemptEvents).values(events.map((event, i) => ({ attemptId, seq: i + 1, simTimeMs: event.atMs, kind: event.kind, payload: event })));
  // The student opened the scenario's first hint at the end: a note in the log, not an input of the model.
  const hint = { kind: 'hint' as const, atMs: 36_000, index: 0 };
  await t.ctx.db.insert(attemptEvents).values({ attemptId, seq: events.length + 1, simTimeMs: hint.atMs, kind: hint.kind, payload: hint });
  await t.ctx.db
    .update(attempts)
    .set({
      status: 'submitted',
      submittedAt: new Date(),
      lastSeq: events.length + 1,
      simTimeMs: 36_000,
      grade: 70,
      readings: [
        { id: 'r1', test: 'battery-ocv', quantity: 'voltage', value: 12.6, unit: 'V', atMs: 3_000, where: 'battery posts' },
        { id: 'r2', test: 'output', quantity: 'current', value: 96, unit: 'A', atMs: 18_000, where: 'B+ cable, pile loaded' },
      ],
      diagnosis: { atMs: SUBMITTED_AT_MS, faultKind: 'diode-open', verdicts: [], notes: '' },
    })
    .where(eq(attempts.id, attemptId));
});
afterAll(async () => {
  await t.close();
});

async function fetchReplay(email: string, id = attemptId): Promise<ReplayResponse> {
  const agent = await signIn(t.app, email);
  return replayResponseSchema.parse((await agent.get(`/api/replay/attempts/${id}`).expect(200)).body);
}

describe('replay', () => {
  it('gives the student the compiled car, the seed, the events as the server ran them, and markers of every kind', async () => {
    const replay = await fetchReplay(students[0]!.email);
    expect(replay.attempt).toMatchObject({ id: attemptId, seed: 4242, durationMs: SUBMITTED_AT_MS, submittedAtMs: SUBMITTED_AT_MS });
    // The scenario's open diode is in the car itself; the injection logged (before deliveries were recorded) is an event.
    expect(replay.car.params.alternator.openDiodes).toEqual([0]);
    expect(replay.events).toHaveLength(benchSession('x').length);
    expect(replay.events.find((e) => e.kind === 'change-apply')).toMatchObject({ atMs: 22_000 });
    expect(replay.faultLabels).toEqual(['Open rectifier diode']);
    // Readings stored before they were checked against their set-ups are listed as written.
    expect(replay.readings.map((r) => [r.id, r.evidence])).toEqual([
      ['r1', null],
      ['r2', null],
    ]);
    expect(new Set(replay.markers.map((m) => m.kind))).toEqual(new Set(MARKER_KINDS));
    expect(replay.markers.filter((m) => m.kind === 'hint').map((m) => m.atMs)).toEqual([36_000]);
    // Two pile turns within a second make one load change.
    expect(replay.markers.filter((m) => m.kind === 'load').map((m) => m.atMs)).toEqual([15_000, 30_000]);
    expect(replay.markers.find((m) => m.kind === 'fault')).toMatchObject({ atMs: 22_000, label: 'Injected: High resistance on the B+ side' });
    expect(replay.canComment).toBe(false);
  });

  it('the state at every marker, reached by seeking from a snapshot, equals the state of the original run', async () => {
    const replay = await fetchReplay(instructor.email);
    const { car, events } = replay;
    const vehicle = car.params;
    const seed = replay.attempt.seed;
    const seekRun = runAttempt(vehicle, seed, events, replay.attempt.durationMs, { snapshotEveryMs: 5_000, changes: car.changes });
    expect(seekRun.snapshots.length).toBeGreaterThan(5);
    // The original run: the bench stepping frame by frame (two steps a frame) from the start.
    const times = [...new Set(replay.markers.map((m) => Math.ceil(m.atMs / DT_MS) * DT_MS))].sort((a, b) => a - b);
    let bench = startPoint(vehicle, seed, car.changes);
    for (const at of times) {
      while (bench.state.timeMs < at) bench = advance(vehicle, bench, events, Math.min(2, (at - bench.state.timeMs) / DT_MS));
      const seeked = stateAt(vehicle, seed, events, at, seekRun.snapshots, car.changes);
      expect(seeked.state.timeMs).toBe(at);
      expect(seeked).toEqual(bench);
    }
    expect(times.length).toBeGreaterThanOrEqual(10);
  });

  it('its instructors may read and comment on a moment; the student sees the comment', async () => {
    const teacher = await signIn(t.app, instructor.email);
    const made = await teacher.post(`/api/replay/attempts/${attemptId}/comments`).send({ simTimeMs: 18_000, body: 'Hold the pile here until the voltage settles.' }).expect(201);
    expect(made.body.comment).toMatchObject({ simTimeMs: 18_000, authorName: instructor.name });
    const replay = await fetchReplay(students[0]!.email);
    expect(replay.comments).toEqual([expect.objectContaining({ simTimeMs: 18_000, body: 'Hold the pile here until the voltage settles.' })]);
    expect((await fetchReplay(instructor.email)).canComment).toBe(true);

    const late = await teacher.post(`/api/replay/attempts/${attemptId}/comments`).send({ simTimeMs: 999_999, body: 'later' }).expect(400);
    expect(late.body.error.field).toBe('simTimeMs');
    const empty = await teacher.post(`/api/replay/attempts/${attemptId}/comments`).send({ simTimeMs: 1_000, body: '   ' }).expect(400);
    expect(empty.body.error.field).toBe('body');
  });

  it('refuses another student, an instructor of another class, a student comment, and a running attempt', async () => {
    const classmate = await signIn(t.app, students[1]!.email);
    await classmate.get(`/api/replay/attempts/${attemptId}`).expect(403);
    await classmate.get(`/api/replay/attempts/${attemptId}/comments`).expect(403);
    const outsider = await signIn(t.app, otherInstructor.email);
    await outsider.get(`/api/replay/attempts/${attemptId}`).expect(403);
    await outsider.post(`/api/replay/attempts/${attemptId}/comments`).send({ simTimeMs: 1_000, body: 'x' }).expect(403);
    const owner = await signIn(t.app, students[0]!.email);
    await owner.post(`/api/replay/attempts/${attemptId}/comments`).send({ simTimeMs: 1_000, body: 'x' }).expect(403);
    const running = await makeAttempt(t.ctx.db, fx, fx.studentIds[0]!);
    await owner.get(`/api/replay/attempts/${running}`).expect(409);
  });
});
