/**
 * Grading through the API: the scripted reference student's log (the car's
 * inputs and its readings, sent as the bench sends them) graded by the
 * server's re-run, and the ways a grade could be had without the work.
 * Limits and weights are the product's (docs/grading.md: common practice, no source).
 */
import { eq } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { AttemptBootstrap, AttemptResult, CarInput, LogEvent, RecordedReading, SubmitInput } from '../../shared/api/attempts.ts';
import type { ReplayResponse } from '../../shared/api/replay.ts';
import { restoreScenario } from '../../shared/scenario.ts';
import { FAULT_TEXT } from '../../shared/fault-catalogue-text.ts';
import { assignments, attempts, scenarios, scenarioVersions } from '../../server/db/schema.ts';
import { referenceStudent, type StudentRun } from './reference-student.ts';
import { assignmentId, benchModel, leads, numbered, readingEvent, readingFrom, startEngine } from './attempts-bench.ts';
import { signIn, startTestApp, type Agent, type TestApp } from './support.ts';

const BO = 'bo.castellane@cindervalley.example';
const CYRUS = 'cyrus.imbert@cindervalley.example';
const EINO = 'eino.marrow@cindervalley.example';
const ADA = 'ada.brightwater@cindervalley.example';

let t: TestApp;
let healthyAssignment: number;
let week2: number;

beforeAll(async () => {
  t = await startTestApp();
  week2 = await assignmentId(t.ctx, 'Week 2: dim lights and radio whine');
  const [week1] = await t.ctx.db.select({ classId: assignments.classId }).from(assignments).where(eq(assignments.id, await assignmentId(t.ctx, 'Week 1: no-charge complaint')));
  const [healthy] = await t.ctx.db.select({ versionId: scenarios.publishedVersionId }).from(scenarios).where(eq(scenarios.slug, 'healthy-control-corvane-linden'));
  const [row] = await t.ctx.db
    .insert(assignments)
    .values({ classId: week1!.classId, scenarioVersionId: healthy!.versionId!, title: 'Whole family on a healthy car', opensAt: new Date(Date.now() - 86_400_000), dueAt: new Date(Date.now() + 86_400_000) })
    .returning({ id: assignments.id });
  healthyAssignment = row!.id;
});
afterAll(async () => {
  await t.close();
});

interface Session {
  agent: Agent;
  boot: AttemptBootstrap;
}

async function start(email: string, assignment: number): Promise<Session> {
  const agent = await signIn(t.app, email);
  const res = await agent.post('/api/attempts').send({ assignmentId: assignment }).expect(201);
  return { agent, boot: res.body as AttemptBootstrap };
}

/** Sends a log as the bench does: in batches, the last one twice (as after a dropped answer). */
async function send(s: Session, log: readonly LogEvent[], firstSeq = 1): Promise<void> {
  const all = numbered(log, firstSeq);
  for (let i = 0; i < all.length; i += 40) await s.agent.post(`/api/attempts/${s.boot.attempt.id}/events`).send({ events: all.slice(i, i + 40) }).expect(200);
  if (all.length) await s.agent.post(`/api/attempts/${s.boot.attempt.id}/events`).send({ events: all.slice(-3) }).expect(200);
}

const submit = (s: Session, body: SubmitInput) => s.agent.post(`/api/attempts/${s.boot.attempt.id}/submit`).send(body);

/** The reference student at this attempt's bench: its scenario version, its seed. */
async function studentFor(s: Session): Promise<StudentRun> {
  const [a] = await t.ctx.db.select({ definition: scenarioVersions.definition }).from(attempts).innerJoin(scenarioVersions, eq(scenarioVersions.id, attempts.scenarioVersionId)).where(eq(attempts.id, s.boot.attempt.id));
  const run = referenceStudent(restoreScenario(a!.definition), s.boot.attempt.seed);
  // The car it drove is the car the server sent the bench.
  expect(run.car).toEqual(s.boot.car);
  return run;
}

describe('grading a healthy car', () => {
  let s: Session;
  let run: StudentRun;
  let result: AttemptResult;

  beforeAll(async () => {
    s = await start(EINO, healthyAssignment);
    run = await studentFor(s);
    await send(s, run.log);
    const res = await submit(s, run.submission);
    expect(res.status).toBe(200);
    result = res.body as AttemptResult;
  });

  it('takes every reading of the log as evidence and gives full marks for the right verdicts and diagnosis', () => {
    expect(result.readings.filter((r) => !r.evidence)).toEqual([]);
    expect(result.readings.map((r) => r.id).sort()).toEqual(run.readings.map((r) => r.id).sort());
    expect(result.verified).toBe(true);
    expect(result.verdicts.every((v) => v.ok && v.correct && v.evidenced)).toBe(true);
    expect(result.fault).toMatchObject({ given: 'none', actual: ['none'], ok: true });
    expect(result.mistakes.filter((m) => m.process)).toEqual([]);
    expect(result.grade).toBe(100);
    expect(result.scoring?.points).toEqual({ evidence: 40, verdicts: 20, fault: 20, process: 20 });
    expect(result.timeToDiagnosisMs).toBe(run.submission.atMs);
    expect(result.outputCurve?.healthy.length).toBeGreaterThan(10);
    expect(result.measuredPoints).toHaveLength(1);
  });

  it('saw a healthy car in the readings the student wrote down', () => {
    const value = (test: string) => result.readings.find((r) => r.test === test)!.value;
    // Output within 10 % of the 150 A rating with the battery held near 12 V: common practice, no source.
    expect(value('output')).toBeGreaterThanOrEqual(135);
    // Regulated 13.5-14.5 V: vehicle maker's technical information on the regulator's normal band (BMW E38).
    expect(value('regulated-voltage')).toBeGreaterThanOrEqual(13.5);
    expect(value('regulated-voltage')).toBeLessThanOrEqual(14.5);
  });

  it('stores the submission with the log’s readings and answers 409 to a second one', async () => {
    const [row] = await t.ctx.db
      .select({ status: attempts.status, grade: attempts.grade, verified: attempts.verified, time: attempts.timeToDiagnosisMs, readings: attempts.readings })
      .from(attempts)
      .where(eq(attempts.id, s.boot.attempt.id));
    expect(row).toMatchObject({ status: 'submitted', grade: 100, verified: true, time: run.submission.atMs });
    expect((row!.readings as RecordedReading[]).map((r) => r.id).sort()).toEqual(run.readings.map((r) => r.id).sort());
    const again = await submit(s, { atMs: run.submission.atMs, diagnosis: { verdicts: [], faultKind: 'none', notes: '' } }).expect(409);
    expect(again.body.error.message).toBe('This attempt has already been submitted');
    const got = await s.agent.get(`/api/attempts/${s.boot.attempt.id}`).expect(200);
    expect(got.body.attempt.status).toBe('submitted');
    expect(got.body.result).toEqual(result);
    const mine = await s.agent.get('/api/attempts/mine').expect(200);
    expect(mine.body.attempts).toContainEqual(expect.objectContaining({ id: s.boot.attempt.id, status: 'submitted', grade: 100, resultsAt: null }));
  });
});

describe('an assignment that hides results until it closes (Week 2)', () => {
  it('grades the reference student fully but shows the student nothing of the key until the due date; the instructor sees it all', async () => {
    const s = await start(BO, week2);
    const run = await studentFor(s);
    await send(s, run.log);
    const res = await submit(s, run.submission).expect(200);
    const seen = res.body as AttemptResult;
    const [due] = await t.ctx.db.select({ dueAt: assignments.dueAt }).from(assignments).where(eq(assignments.id, week2));
    expect(seen.hidden).toEqual({ reason: 'until-close', until: due!.dueAt.toISOString() });
    expect(seen.grade).toBeNull();
    expect(seen.fault).toEqual({ given: 'diode-open', actual: null, ok: null, labels: [] });
    expect(seen.verdicts).toEqual([]);
    expect(seen.readings.every((r) => r.shown === null && r.valueOk === null && r.inSetup)).toBe(true);
    // The whole result is stored, and an instructor of the class reads it.
    const teacher = await signIn(t.app, 'r.okafor-lind@cindervalley.example');
    const whole = (await teacher.get(`/api/attempts/${s.boot.attempt.id}`).expect(200)).body.result as AttemptResult;
    expect(whole.grade).toBe(100);
    expect(whole.fault).toEqual({ given: 'diode-open', actual: ['diode-open'], ok: true, labels: [FAULT_TEXT['diode-open'].label] });
    expect(whole.outputCurve?.fitted.length).toBeGreaterThan(10);
    // The replay is a place the student can look: it names no fault for them until the due date, and does for the instructor.
    const own = (await s.agent.get(`/api/replay/attempts/${s.boot.attempt.id}`).expect(200)).body as ReplayResponse;
    expect(own.faultLabels).toEqual([]);
    expect(own.changeLabels).toEqual({});
    expect(own.attempt).toMatchObject({ grade: null, resultsAt: due!.dueAt.toISOString() });
    expect(own.readings.length).toBeGreaterThan(0);
    expect(own.readings.every((r) => r.shown === null && r.valueOk === null)).toBe(true);
    const theirs = (await teacher.get(`/api/replay/attempts/${s.boot.attempt.id}`).expect(200)).body as ReplayResponse;
    expect(theirs.faultLabels).toEqual([FAULT_TEXT['diode-open'].label]);
    expect(theirs.attempt).toMatchObject({ grade: 100, resultsAt: null });
  });
});

describe('checking what the student wrote down', () => {
  it('marks a reading the display never showed as not evidence and the attempt unverified', async () => {
    const s = await start(ADA, healthyAssignment);
    const run = await studentFor(s);
    const forged = run.log.map((e) => (e.kind === 'reading' && e.reading.test === 'output' ? { ...e, reading: { ...e.reading, value: e.reading.value + 40 } } : e));
    await send(s, forged);
    const r = (await submit(s, run.submission).expect(200)).body as AttemptResult;
    expect(r.verified).toBe(false);
    const off = r.readings.filter((x) => !x.valueOk);
    expect(off.map((x) => x.test)).toEqual(['output']);
    expect(off[0]!.shown).toBe(run.readings.find((x) => x.test === 'output')!.value);
    expect(off[0]!.reason).toMatch(/The bench showed .* A then, not/);
    expect(r.grade).toBeLessThan(100);
    const [row] = await t.ctx.db.select({ verified: attempts.verified }).from(attempts).where(eq(attempts.id, s.boot.attempt.id));
    expect(row?.verified).toBe(false);
  });

  it('finds a reversed clamp left so, a held load and an overheated pile in a practice re-run, and shows them without the fault', async () => {
    // A scenario no assignment of Ada's class runs (the healthy car is withheld from practice while its assignment above is open).
    const practiceId = (await t.ctx.db.select({ id: scenarios.id }).from(scenarios).where(eq(scenarios.slug, 'wrong-rating-dunmore-reach')))[0]!.id;
    const agent = await signIn(t.app, ADA);
    const boot = (await agent.post('/api/attempts').send({ scenarioId: practiceId, mode: 'practice' }).expect(201)).body as AttemptBootstrap;
    const events: CarInput[] = [
      ...leads(0, 'battery-pos', 'battery-neg'),
      ...startEngine(1000, 2000),
      { kind: 'clamp', atMs: 6000, conductor: 'bplus-cable', arrow: 'toward-alternator' },
      { kind: 'pile', atMs: 8000, dial01: 1 },
    ];
    await agent.post(`/api/attempts/${boot.attempt.id}/events`).send({ events: numbered(events) }).expect(200);
    const res = await agent.post(`/api/attempts/${boot.attempt.id}/submit`).send({ atMs: 300_000, diagnosis: { verdicts: [], faultKind: 'none', notes: '' } }).expect(200);
    const r = res.body as AttemptResult;
    const kinds = r.mistakes.map((m) => m.kind);
    expect(kinds).toContain('reversed-clamp');
    expect(kinds).toContain('long-loaded-test');
    expect(kinds).toContain('pile-overheated');
    const clamp = r.mistakes.find((m) => m.kind === 'reversed-clamp')!;
    expect(clamp.atMs).toBeGreaterThanOrEqual(6000);
    expect(clamp.atMs).toBeLessThan(8000);
    // Practice is ungraded and reveals nothing a live car would not: no fault, no verdict key, no fitted curve.
    expect(r.grade).toBeNull();
    expect(r.hidden).toEqual({ reason: 'practice', until: null });
    expect(r.fault.actual).toBeNull();
    expect(r.outputCurve).toBeUndefined();
    expect(r.feedback.length).toBeGreaterThan(0);
  });

  it('waits for missing events before grading, refuses a submission earlier than the log, and a reading in the wrong unit', async () => {
    const s = await start(ADA, healthyAssignment);
    const model = benchModel(s.boot);
    const log: LogEvent[] = [...leads(0, 'battery-pos', 'battery-neg'), ...startEngine(1000, 2000)];
    const all = numbered(log);
    await s.agent.post(`/api/attempts/${s.boot.attempt.id}/events`).send({ events: [...all.slice(0, 2), ...all.slice(4)] }).expect(200);
    const gap = await submit(s, { atMs: 10_000, diagnosis: { verdicts: [], faultKind: 'none', notes: '' } }).expect(409);
    expect(gap.body.error.message).toMatch(/Events 3 to 4 have not arrived/);
    await s.agent.post(`/api/attempts/${s.boot.attempt.id}/events`).send({ events: all.slice(2, 4) }).expect(200);
    const early = await submit(s, { atMs: 1000, diagnosis: { verdicts: [], faultKind: 'none', notes: '' } }).expect(400);
    expect(early.body.error.field).toBe('atMs');
    const reading = readingFrom((at) => model.meters(log, at), 'x', 'output', 'voltage', 5000, '');
    const bad = await s.agent
      .post(`/api/attempts/${s.boot.attempt.id}/events`)
      .send({ events: numbered([readingEvent({ ...reading, quantity: 'current', unit: 'V' }, 5000)], 6) })
      .expect(400);
    expect(bad.body.error.field).toBe('events.0.event.reading.unit');
    const [row] = await t.ctx.db.select({ status: attempts.status }).from(attempts).where(eq(attempts.id, s.boot.attempt.id));
    expect(row?.status).toBe('running');
  });

  it('gives nothing but a wrong-verdict zero to a student who names the right fault without doing the work', async () => {
    const s = await start(CYRUS, week2);
    const res = await submit(s, { atMs: 0, diagnosis: { verdicts: [{ test: 'ripple', pass: false }], faultKind: 'diode-open', notes: '' } }).expect(200);
    expect((res.body as AttemptResult).grade).toBeNull(); // hidden until Week 2 closes
    const [row] = await t.ctx.db.select({ grade: attempts.grade, verified: attempts.verified }).from(attempts).where(eq(attempts.id, s.boot.attempt.id));
    expect(row).toEqual({ grade: 0, verified: false });
  });
});
