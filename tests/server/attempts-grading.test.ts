import { eq } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { InputEvent } from '../../sim/inputs.ts';
import type { AttemptBootstrap, AttemptResult, RecordedReading, SubmitInput } from '../../shared/api/attempts.ts';
import { FAULT_CATALOG } from '../../sim/faults.ts';
import { assignments, attempts, scenarios } from '../../server/db/schema.ts';
import { assignmentId, benchModel, leads, numbered, pileRamp, readingFrom, startEngine } from './attempts-bench.ts';
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
  const [healthy] = await t.ctx.db
    .select({ versionId: scenarios.publishedVersionId })
    .from(scenarios)
    .where(eq(scenarios.slug, 'healthy-control-corvane-linden'));
  const [row] = await t.ctx.db
    .insert(assignments)
    .values({
      classId: week1!.classId,
      scenarioVersionId: healthy!.versionId!,
      title: 'Whole family on a healthy car',
      opensAt: new Date(Date.now() - 86_400_000),
      dueAt: new Date(Date.now() + 86_400_000),
    })
    .returning({ id: assignments.id });
  healthyAssignment = row!.id;
});
afterAll(async () => {
  await t.close();
});

interface Session {
  agent: Agent;
  boot: AttemptBootstrap;
  events: InputEvent[];
  meters: (atMs: number) => ReturnType<Awaited<ReturnType<typeof benchModel>>['meters']>;
}

async function start(email: string, assignment: number, events: InputEvent[]): Promise<Session> {
  const agent = await signIn(t.app, email);
  const res = await agent.post('/api/attempts').send({ assignmentId: assignment }).expect(201);
  const boot = res.body as AttemptBootstrap;
  // The bench sends its log in batches; the last batch is sent twice, as after a dropped answer.
  const all = numbered(events);
  for (let i = 0; i < all.length; i += 7) await agent.post(`/api/attempts/${boot.attempt.id}/events`).send({ events: all.slice(i, i + 7) }).expect(200);
  if (all.length) await agent.post(`/api/attempts/${boot.attempt.id}/events`).send({ events: all.slice(-3) }).expect(200);
  const model = await benchModel(boot);
  return { agent, boot, events, meters: (atMs) => model.meters(events, atMs) };
}

const submit = (s: Session, body: SubmitInput) => s.agent.post(`/api/attempts/${s.boot.attempt.id}/submit`).send(body);

/**
 * A student runs the whole family by hand: resting voltage, a load test with
 * the engine off, then the engine at 2,000 rpm for the regulated voltage,
 * the clamp on the B+ cable and the pile dialled up until the battery is
 * near 12 V, the two voltage drops under that load, and the ripple at B+.
 */
const FAMILY: InputEvent[] = [
  ...leads(0, 'battery-pos', 'battery-neg'),
  { kind: 'pile', atMs: 1000, dial01: 0.45 },
  { kind: 'pile', atMs: 11_000, dial01: 0 },
  ...startEngine(13_000, 2000),
  { kind: 'clamp', atMs: 20_500, conductor: 'bplus-cable', arrow: 'toward-battery' },
  ...pileRamp(21_000, 8, 0.09),
  ...leads(28_600, 'alt-bplus', 'battery-pos'),
  ...leads(30_100, 'alt-case', 'battery-neg'),
  { kind: 'pile', atMs: 32_000, dial01: 0 },
  ...leads(32_100, 'alt-bplus', 'alt-case'),
  { kind: 'rpm', atMs: 32_100, rpm: 1500 },
];
const FAMILY_SUBMIT_MS = 37_000;

function familyReadings(s: Session): RecordedReading[] {
  return [
    readingFrom(s.meters, 'r-ocv', 'battery-ocv', 'voltage', 500, 'battery posts, key off'),
    readingFrom(s.meters, 'r-load', 'battery-load', 'voltage', 10_500, 'battery posts, pile at half CCA, engine off'),
    readingFrom(s.meters, 'r-reg', 'regulated-voltage', 'voltage', 20_000, 'battery posts, engine at 2,000 rpm, no load'),
    readingFrom(s.meters, 'r-out-v', 'output', 'voltage', 28_500, 'battery posts, engine at 2,000 rpm, pile loaded'),
    readingFrom(s.meters, 'r-out-a', 'output', 'current', 28_500, 'clamp on B+ cable, pile loaded'),
    readingFrom(s.meters, 'r-drop-pos', 'voltage-drop-positive', 'voltage', 30_000, 'B+ stud to battery positive, loaded'),
    readingFrom(s.meters, 'r-drop-gnd', 'voltage-drop-ground', 'voltage', 31_500, 'alternator case to battery negative, loaded'),
    readingFrom(s.meters, 'r-ripple', 'ripple', 'ripple', 36_000, 'B+ stud to case, 1,500 rpm'),
  ];
}

describe('grading a healthy car', () => {
  let s: Session;
  let result: AttemptResult;

  beforeAll(async () => {
    s = await start(EINO, healthyAssignment, FAMILY);
    const res = await submit(s, {
      atMs: FAMILY_SUBMIT_MS,
      readings: familyReadings(s),
      diagnosis: {
        verdicts: ['battery-ocv', 'battery-load', 'regulated-voltage', 'output', 'voltage-drop-positive', 'voltage-drop-ground', 'ripple'].map((test) => ({ test, pass: true })) as SubmitInput['diagnosis']['verdicts'],
        faultKind: 'none',
        notes: 'Everything within limits.',
      },
    });
    expect(res.status).toBe(200);
    result = res.body as AttemptResult;
  });

  it('verifies every reading against the re-run and gives full marks for the right verdicts and diagnosis', () => {
    expect(result.readings.filter((r) => !r.ok)).toEqual([]);
    expect(result.verified).toBe(true);
    expect(result.verdicts.every((v) => v.ok && v.correct)).toBe(true);
    expect(result.fault).toMatchObject({ given: 'none', actual: ['none'], ok: true });
    expect(result.mistakes).toEqual([]);
    expect(result.grade).toBe(100);
    expect(result.timeToDiagnosisMs).toBe(FAMILY_SUBMIT_MS);
    expect(result.outputCurve?.healthy.length).toBeGreaterThan(10);
    expect(result.measuredPoints).toHaveLength(1);
  });

  it('saw a healthy car in the readings the student wrote down', () => {
    const value = (id: string) => result.readings.find((r) => r.id === id)!.value;
    // Output within 10 % of the 150 A rating with the battery held near 12 V: common practice, no source.
    expect(value('r-out-a')).toBeGreaterThanOrEqual(135);
    expect(value('r-out-v')).toBeGreaterThan(11.5);
    expect(value('r-out-v')).toBeLessThan(12.8);
    // Regulated 13.5-14.5 V: vehicle maker's technical information on the regulator's normal band.
    expect(value('r-reg')).toBeGreaterThanOrEqual(13.5);
    expect(value('r-reg')).toBeLessThanOrEqual(14.5);
  });

  it('stores the submission and answers 409 to a second one', async () => {
    const [row] = await t.ctx.db
      .select({ status: attempts.status, grade: attempts.grade, verified: attempts.verified, time: attempts.timeToDiagnosisMs, submittedAt: attempts.submittedAt })
      .from(attempts)
      .where(eq(attempts.id, s.boot.attempt.id));
    expect(row).toMatchObject({ status: 'submitted', grade: 100, verified: true, time: FAMILY_SUBMIT_MS });
    expect(row?.submittedAt).toBeInstanceOf(Date);
    const again = await submit(s, { atMs: FAMILY_SUBMIT_MS, readings: [], diagnosis: { verdicts: [], faultKind: 'none', notes: '' } }).expect(409);
    expect(again.body.error.message).toBe('This attempt has already been submitted');
    const got = await s.agent.get(`/api/attempts/${s.boot.attempt.id}`).expect(200);
    expect(got.body.attempt.status).toBe('submitted');
    expect(got.body.result).toEqual(result);
    const mine = await s.agent.get('/api/attempts/mine').expect(200);
    expect(mine.body.attempts).toContainEqual(
      expect.objectContaining({ id: s.boot.attempt.id, status: 'submitted', grade: 100, timeToDiagnosisMs: FAMILY_SUBMIT_MS, assignmentTitle: 'Whole family on a healthy car' }),
    );
  });
});

describe('grading an open rectifier diode', () => {
  // Week 2's car has one open diode; the scenario expects the ripple test (its output passes at 2,000 rpm).
  const SCRIPT: InputEvent[] = [
    ...leads(0, 'battery-pos', 'battery-neg'),
    ...startEngine(1000, 2000),
    { kind: 'clamp', atMs: 6000, conductor: 'bplus-cable', arrow: 'toward-battery' },
    ...pileRamp(8000, 8, 0.09),
    { kind: 'pile', atMs: 17_000, dial01: 0 },
    ...leads(17_500, 'alt-bplus', 'alt-case'),
    { kind: 'rpm', atMs: 17_500, rpm: 1500 },
  ];
  const readings = (s: Session) => [
    readingFrom(s.meters, 'a', 'output', 'current', 15_500, 'clamp on B+ cable, pile loaded'),
    readingFrom(s.meters, 'v', 'output', 'voltage', 15_500, 'battery posts, pile loaded'),
    readingFrom(s.meters, 'rip', 'ripple', 'ripple', 21_000, 'B+ stud to case, 1,500 rpm'),
  ];

  it('gives a high grade for the right fault and verdicts, and names the fault only now', async () => {
    const s = await start(BO, week2, SCRIPT);
    const res = await submit(s, {
      atMs: 22_000,
      readings: readings(s),
      diagnosis: { verdicts: [{ test: 'output', pass: true }, { test: 'ripple', pass: false }], faultKind: 'diode-open', notes: '' },
    }).expect(200);
    const r = res.body as AttemptResult;
    expect(r.verified).toBe(true);
    expect(r.fault).toEqual({ given: 'diode-open', actual: ['diode-open'], ok: true, labels: [FAULT_CATALOG['diode-open'].label] });
    expect(r.grade).toBeGreaterThanOrEqual(90);
    // Week 2 hides feedback until later but shows the output curve.
    expect(r.feedback).toEqual([]);
    expect(r.outputCurve?.fitted.length).toBeGreaterThan(10);
  });

  it('gives a low grade for a wrong fault and wrong verdicts, and explains nothing while feedback is hidden', async () => {
    const s = await start(CYRUS, week2, SCRIPT);
    const res = await submit(s, {
      atMs: 22_000,
      readings: readings(s),
      diagnosis: { verdicts: [{ test: 'output', pass: true }, { test: 'ripple', pass: true }], faultKind: 'none', notes: '' },
    }).expect(200);
    const r = res.body as AttemptResult;
    expect(r.fault.ok).toBe(false);
    expect(r.verdicts.map((v) => [v.test, v.ok])).toEqual([['ripple', false]]);
    expect(r.grade).toBeLessThanOrEqual(40);
    expect(r.grade).toBeGreaterThan(0);
  });
});

describe('checking what the student wrote down', () => {
  it('flags a reading the meter never showed and marks the attempt unverified', async () => {
    const s = await start(ADA, healthyAssignment, FAMILY);
    const honest = familyReadings(s);
    const made = honest.map((r) => (r.id === 'r-out-a' ? { ...r, value: r.value + 40 } : r));
    const res = await submit(s, {
      atMs: FAMILY_SUBMIT_MS,
      readings: made,
      diagnosis: { verdicts: [{ test: 'output', pass: true }], faultKind: 'none', notes: '' },
    }).expect(200);
    const r = res.body as AttemptResult;
    expect(r.verified).toBe(false);
    const flagged = r.readings.filter((x) => !x.ok);
    expect(flagged.map((x) => x.id)).toEqual(['r-out-a']);
    const expected = honest.find((x) => x.id === 'r-out-a')!.value;
    expect(flagged[0]!.expectedValue).toBeCloseTo(expected, 0);
    expect(flagged[0]!.message).toMatch(/showed .* A then, not/);
    expect(r.feedback.some((f) => f.includes('not'))).toBe(true);
    const [row] = await t.ctx.db.select({ verified: attempts.verified }).from(attempts).where(eq(attempts.id, s.boot.attempt.id));
    expect(row?.verified).toBe(false);
  });

  it('finds a reversed clamp, a held load and an overheated pile in the re-run', async () => {
    const practiceId = (await t.ctx.db.select({ id: scenarios.id }).from(scenarios).where(eq(scenarios.slug, 'healthy-control-corvane-linden')))[0]!.id;
    const agent = await signIn(t.app, ADA);
    const boot = (await agent.post('/api/attempts').send({ scenarioId: practiceId, mode: 'practice' }).expect(201)).body as AttemptBootstrap;
    const events: InputEvent[] = [
      ...leads(0, 'battery-pos', 'battery-neg'),
      ...startEngine(1000, 2000),
      { kind: 'clamp', atMs: 6000, conductor: 'bplus-cable', arrow: 'toward-alternator' },
      { kind: 'pile', atMs: 8000, dial01: 1 },
    ];
    await agent.post(`/api/attempts/${boot.attempt.id}/events`).send({ events: numbered(events) }).expect(200);
    const res = await agent
      .post(`/api/attempts/${boot.attempt.id}/submit`)
      .send({ atMs: 300_000, readings: [], diagnosis: { verdicts: [], faultKind: 'none', notes: '' } })
      .expect(200);
    const r = res.body as AttemptResult;
    const kinds = r.mistakes.map((m) => m.kind);
    expect(kinds).toContain('reversed-clamp');
    expect(kinds).toContain('long-loaded-test');
    expect(kinds).toContain('pile-overheated');
    const clamp = r.mistakes.find((m) => m.kind === 'reversed-clamp')!;
    expect(clamp.atMs).toBeGreaterThanOrEqual(6000);
    expect(clamp.atMs).toBeLessThan(8000);
    // Practice is ungraded and shows the fault (here: none) and the feedback.
    expect(r.grade).toBeNull();
    expect(r.fault.actual).toEqual(['none']);
    expect(r.feedback.length).toBeGreaterThan(0);
  });

  it('waits for missing events before grading, and refuses a submission earlier than the log', async () => {
    const s = await start(ADA, healthyAssignment, []);
    const all = numbered(FAMILY);
    await s.agent.post(`/api/attempts/${s.boot.attempt.id}/events`).send({ events: [...all.slice(0, 2), ...all.slice(4)] }).expect(200);
    const gap = await submit(s, { atMs: FAMILY_SUBMIT_MS, readings: [], diagnosis: { verdicts: [], faultKind: 'none', notes: '' } }).expect(409);
    expect(gap.body.error.message).toMatch(/Events 3 to 4 have not arrived/);
    await s.agent.post(`/api/attempts/${s.boot.attempt.id}/events`).send({ events: all.slice(2, 4) }).expect(200);
    const early = await submit(s, { atMs: 1000, readings: [], diagnosis: { verdicts: [], faultKind: 'none', notes: '' } }).expect(400);
    expect(early.body.error.field).toBe('atMs');
    const bad = await submit(s, {
      atMs: FAMILY_SUBMIT_MS,
      readings: [{ id: 'x', test: 'output', quantity: 'current', value: 10, unit: 'V', atMs: 100, where: '' }],
      diagnosis: { verdicts: [], faultKind: 'none', notes: '' },
    }).expect(400);
    expect(bad.body.error.field).toBe('readings.0.unit');
    const [row] = await t.ctx.db.select({ status: attempts.status }).from(attempts).where(eq(attempts.id, s.boot.attempt.id));
    expect(row?.status).toBe('running');
  });
});
