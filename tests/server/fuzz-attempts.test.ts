/**
 * Fuzzing the attempt, live, replay and sign-off routes with valid-looking and
 * hostile bodies. Checks and sources: fuzz-kit.ts.
 */
import fc from 'fast-check';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { checker, expectRanThePlan, FUZZ_TIMEOUT_MS, mutations, runTarget, type Checker, type Target } from './fuzz-kit.ts';
import { instructor, makeAttempt, makeClass, makeSubmitted, students, type ClassFixture } from './live-fixtures.ts';
import { signIn, startTestApp, type Agent, type TestApp } from './support.ts';

let t: TestApp;
let student: Agent;
let teacher: Agent;
let ck: Checker;
let fx: ClassFixture;
let eventsAttempt: number;
let submitAttempt: number;
let liveAttempt: number;
let submitted: number;
let injectionId: number;
let seq = 0;

beforeAll(async () => {
  t = await startTestApp();
  student = await signIn(t.app, students[0]!.email);
  teacher = await signIn(t.app, instructor.email);
  fx = await makeClass(t.ctx.db, { students: 2, name: 'Fuzz section' });
  eventsAttempt = await makeAttempt(t.ctx.db, fx, fx.studentIds[0]!);
  submitAttempt = await makeAttempt(t.ctx.db, fx, fx.studentIds[0]!);
  liveAttempt = await makeAttempt(t.ctx.db, fx, fx.studentIds[0]!);
  submitted = await makeSubmitted(t.ctx.db, fx, fx.studentIds[1]!, { timeToDiagnosisMs: 90_000, given: 'diode-open', grade: 75 });
  const injected = await teacher.post(`/api/live/attempts/${liveAttempt}/inject`).send({ kind: 'belt-slip', severity01: 0.5 }).expect(201);
  injectionId = injected.body.injection.injectionId as number;
  ck = await checker(t.ctx.pool);
});
afterAll(async () => {
  await t?.close();
});

const event = () => ({ kind: 'pile', atMs: 1000 + seq, dial01: 0.25 }) as Record<string, unknown>;

const targets = (): Target[] => [
  { name: 'POST /api/attempts', agent: () => student, method: 'post', path: () => '/api/attempts', body: mutations(() => ({ assignmentId: fx.assignmentId })), runs: 250 },
  {
    name: 'POST /api/attempts/:id/events (batch)',
    agent: () => student,
    method: 'post',
    path: () => `/api/attempts/${eventsAttempt}/events`,
    body: mutations(() => ({ events: [{ seq: ++seq, event: event() }] })),
    runs: 500,
  },
  {
    // Inside one event: every field of an input event, hostile in turn.
    name: 'POST /api/attempts/:id/events (event fields)',
    agent: () => student,
    method: 'post',
    path: () => `/api/attempts/${eventsAttempt}/events`,
    body: fc
      .tuple(fc.constantFrom('pile', 'key', 'rpm', 'accessory', 'lead', 'clamp', 'ammeter', 'bplus-disconnect', 'fault-inject', 'fault-clear', 'nonsense'), mutations(event))
      .map(([kind, e]) => ({ events: [{ seq: ++seq, event: e && typeof e === 'object' && !Array.isArray(e) ? { ...e, kind } : e }] })),
    runs: 500,
  },
  {
    name: 'POST /api/attempts/:id/submit',
    agent: () => student,
    method: 'post',
    path: () => `/api/attempts/${submitAttempt}/submit`,
    body: mutations(() => ({
      atMs: 5000,
      readings: [{ id: 'r1', test: 'output', quantity: 'current', value: 120, unit: 'A', atMs: 4000, where: 'B+ cable' }],
      diagnosis: { verdicts: [{ test: 'output', pass: true }], faultKind: 'none', notes: 'Looks fine' },
    })),
    runs: 300,
    // A valid submission ends the attempt: the next cases go to a fresh one.
    after: async (answer) => {
      if (answer.status !== 200) return;
      submitAttempt = await makeAttempt(t.ctx.db, fx, fx.studentIds[0]!);
      await ck.rebase();
    },
  },
  {
    name: 'POST /api/live/attempts/:id/inject',
    agent: () => teacher,
    method: 'post',
    path: () => `/api/live/attempts/${liveAttempt}/inject`,
    body: mutations(() => ({ kind: 'diode-open', severity01: 0.7, delayS: 2, intermittent: { periodS: 4, onFraction01: 0.5 } })),
    runs: 300,
  },
  { name: 'POST /api/live/attempts/:id/clear', agent: () => teacher, method: 'post', path: () => `/api/live/attempts/${liveAttempt}/clear`, body: mutations(() => ({ injectionId })), runs: 200 },
  {
    name: 'POST /api/replay/attempts/:id/comments',
    agent: () => teacher,
    method: 'post',
    path: () => `/api/replay/attempts/${submitted}/comments`,
    body: mutations(() => ({ simTimeMs: 1000, body: 'Good clamp placement here.' })),
    runs: 300,
  },
  {
    name: 'POST /api/sign-offs',
    agent: () => teacher,
    method: 'post',
    path: () => '/api/sign-offs',
    body: mutations(() => ({ attemptId: submitted, competency: 'ripple', note: 'Signed from the bench check' })),
    runs: 300,
  },
];

const NAMES = [
  'POST /api/attempts',
  'POST /api/attempts/:id/events (batch)',
  'POST /api/attempts/:id/events (event fields)',
  'POST /api/attempts/:id/submit',
  'POST /api/live/attempts/:id/inject',
  'POST /api/live/attempts/:id/clear',
  'POST /api/replay/attempts/:id/comments',
  'POST /api/sign-offs',
];

describe('fuzzing the attempt, live, replay and sign-off routes', () => {
  it('has a target for each name', () => {
    expect(targets().map((x) => x.name)).toEqual(NAMES);
  });

  it.each(NAMES)('%s: no 5xx, 4xx name the field, rejected requests write nothing', async (name) => {
    await runTarget(ck, targets().find((x) => x.name === name)!);
  }, FUZZ_TIMEOUT_MS);

  it('ran every planned case', () => {
    // The plan is the target list the runs above iterate: each target ran its own number of cases.
    expectRanThePlan(ck, targets());
  });
});
