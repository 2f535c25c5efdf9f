/**
 * The other class's instructor: an instructor who enrols another class's
 * student (no approval needed) reaches, through that, only the work done for
 * their own class. Written as the attack that worked before: enrol Ada by
 * e-mail, then read her other class's attempts and replays, her practice,
 * inject a fault into her practice bench, comment on her replay, read her
 * progress from every class, withdraw another instructor's sign-off, and
 * learn from the enrolment form what role an e-mail has.
 *
 * Sources: OWASP ASVS 4.0 V4.1.3 (least privilege), V4.2.1 (no access to
 * others' records by changing an id), V4.3.x; OWASP Top 10 2021 A01 (broken
 * access control); from memory.
 */
import { and, eq, inArray } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DEMO_PEOPLE } from '../../server/db/demo-people.ts';
import { assignments, attempts, classes, classInstructors, signOffs } from '../../server/db/schema.ts';
import { NOT_A_STUDENT } from '../../server/classes/queries.ts';
import { progressResponseSchema } from '../../shared/api/compare.ts';
import { instructor, makeAttempt, makeClass, makeSubmitted, otherInstructor, students, userId, type ClassFixture } from './live-fixtures.ts';
import { signIn, startTestApp, waitForMail, type Agent, type TestApp } from './support.ts';

const ada = students[0]!;
const admin = DEMO_PEOPLE.find((p) => p.role === 'admin')!;

let t: TestApp;
let fx: ClassFixture;
/** The other instructor's class, with its own assignment of the same scenario. */
let theirs: ClassFixture;
let adaId: number;
let ownA: Agent;
let other: Agent;
let adaAgent: Agent;
let adminAgent: Agent;
let assignedRunning: number;
let assignedSubmitted: number;
let theirSubmitted: number;
let practiceRunning: number;
let practiceSubmitted: number;
let signOffId: number;

beforeAll(async () => {
  t = await startTestApp();
  const db = t.ctx.db;
  fx = await makeClass(db, { students: 1, name: 'Charging systems, day section' });
  adaId = fx.studentIds[0]!;
  const otherId = await userId(db, otherInstructor.email);
  const [cls] = await db.insert(classes).values({ name: 'Electrical fundamentals, night section', term: 'Spring' }).returning({ id: classes.id });
  await db.insert(classInstructors).values({ classId: cls!.id, userId: otherId });
  const [asg] = await db
    .insert(assignments)
    .values({ classId: cls!.id, scenarioVersionId: fx.scenarioVersionId, title: 'Night bench check', opensAt: new Date(Date.now() - 86_400_000), dueAt: new Date(Date.now() + 86_400_000), createdBy: otherId })
    .returning({ id: assignments.id });
  theirs = { ...fx, classId: cls!.id, instructorId: otherId, assignmentId: asg!.id };

  ownA = await signIn(t.app, instructor.email);
  other = await signIn(t.app, otherInstructor.email);
  adaAgent = await signIn(t.app, ada.email);
  adminAgent = await signIn(t.app, admin.email);

  assignedRunning = await makeAttempt(db, fx, adaId);
  assignedSubmitted = await makeSubmitted(db, fx, adaId, { timeToDiagnosisMs: 300_000, given: 'diode-open', grade: 91, verdicts: [{ test: 'output', ok: true }] });
  // Ada's practice on the same published scenario, started as the bench starts it (both assignments allow practice on it).
  await db.update(assignments).set({ allowPractice: true }).where(inArray(assignments.id, [fx.assignmentId, asg!.id]));
  const scenarioId = (await ownA.get(`/api/assignments/${fx.assignmentId}`).expect(200)).body.assignment.scenarioId as number;
  practiceRunning = (await adaAgent.post('/api/attempts').send({ scenarioId, mode: 'practice' }).expect(201)).body.attempt.id as number;
  const [done] = await db
    .insert(attempts)
    .values({ userId: adaId, scenarioVersionId: fx.scenarioVersionId, assignmentId: null, mode: 'practice', seed: 3, status: 'submitted', submittedAt: new Date(), result: { grade: null }, diagnosis: { atMs: 1000, faultKind: 'none', verdicts: [], readings: [] } })
    .returning({ id: attempts.id });
  practiceSubmitted = done!.id;
  signOffId = (await ownA.post('/api/sign-offs').send({ attemptId: assignedSubmitted, competency: 'output', note: 'Day section: clean pile technique' }).expect(201)).body.signOff.id as number;
});
afterAll(async () => {
  await t?.close();
});

describe('the other class’s instructor, after enrolling the student', () => {
  it('enrols her by e-mail, and she is told by e-mail who added her to which class', async () => {
    const res = await other.post(`/api/classes/${theirs.classId}/students`).send({ email: ada.email }).expect(201);
    expect(res.body).toMatchObject({ created: false, invited: false, student: { email: ada.email } });
    const mail = await waitForMail(t.ctx, ada.email);
    expect(mail.subject).toMatch(/added to Electrical fundamentals, night section/);
    expect(mail.body).toContain(otherInstructor.name);
    expect(mail.body).toMatch(/tell your program admin/);
    // Work for the new class is theirs to see.
    theirSubmitted = await makeSubmitted(t.ctx.db, theirs, adaId, { timeToDiagnosisMs: 200_000, given: 'diode-open', grade: 70, verdicts: [{ test: 'output', ok: false }] });
    expect((await other.get(`/api/attempts/${theirSubmitted}`)).status).toBe(200);
  });

  it('cannot read her attempts, replays or comments from the other class', async () => {
    for (const path of [`/api/attempts/${assignedRunning}`, `/api/attempts/${assignedSubmitted}`, `/api/replay/attempts/${assignedSubmitted}`, `/api/replay/attempts/${assignedSubmitted}/comments`, `/api/live/attempts/${assignedRunning}/injections`]) {
      expect((await other.get(path)).status, path).toBe(403);
    }
    expect((await other.post(`/api/replay/attempts/${assignedSubmitted}/comments`).send({ simTimeMs: 0, body: 'Not my class.' })).status).toBe(403);
    expect((await other.post(`/api/live/attempts/${assignedRunning}/inject`).send({ kind: 'diode-open', severity01: 1 })).status).toBe(403);
  });

  it('cannot read, comment on or inject into her practice, and neither can the instructor of her own class', async () => {
    for (const teacher of [other, ownA]) {
      for (const path of [`/api/attempts/${practiceRunning}`, `/api/attempts/${practiceSubmitted}`, `/api/replay/attempts/${practiceSubmitted}`, `/api/live/attempts/${practiceRunning}/injections`]) {
        expect((await teacher.get(path)).status, path).toBe(403);
      }
      expect((await teacher.post(`/api/live/attempts/${practiceRunning}/inject`).send({ kind: 'diode-open', severity01: 1 })).status).toBe(403);
      expect((await teacher.post(`/api/replay/attempts/${practiceSubmitted}/comments`).send({ simTimeMs: 0, body: 'Practice is hers.' })).status).toBe(403);
      expect((await teacher.post('/api/sign-offs').send({ attemptId: practiceSubmitted, competency: 'output' })).status).toBe(403);
    }
    const [{ n }] = (await t.ctx.pool.query<{ n: number }>('select count(*)::int as n from pending_injections where attempt_id = $1', [practiceRunning])).rows as [{ n: number }];
    expect(n).toBe(0);
    // Her practice stays hers (and an admin's).
    expect((await adaAgent.get(`/api/attempts/${practiceRunning}`)).status).toBe(200);
    expect((await adminAgent.get(`/api/attempts/${practiceRunning}`)).status).toBe(200);
  });

  it('sees neither her practice nor the other class’s attempts on any class board', async () => {
    const theirBoard = (await other.get(`/api/live/classes/${theirs.classId}/board`).expect(200)).body.attempts as { attemptId: number }[];
    expect(theirBoard.map((a) => a.attemptId)).not.toContain(practiceRunning);
    expect(theirBoard.map((a) => a.attemptId)).not.toContain(assignedRunning);
    const ownBoard = (await ownA.get(`/api/live/classes/${fx.classId}/board`).expect(200)).body.attempts as { attemptId: number }[];
    expect(ownBoard.map((a) => a.attemptId)).toContain(assignedRunning);
    expect(ownBoard.map((a) => a.attemptId)).not.toContain(practiceRunning);
  });

  it('reads her progress with only their own class’s work in it, and the other class’s sign-off without its attempt or note', async () => {
    const theirView = progressResponseSchema.parse((await other.get(`/api/sign-offs/students/${adaId}`).expect(200)).body);
    const output = theirView.competencies.find((c) => c.competency === 'output')!;
    expect(output.evidence.map((e) => e.attemptId)).toEqual([theirSubmitted]);
    expect(output).toMatchObject({ gradedAttempts: 1, verdicts: 1, verdictsRight: 0 });
    // The sign-off is Ada's record, so it shows; what it was made from stays with the day section.
    expect(output.signOff).toMatchObject({ signedByName: instructor.name, attemptId: null, note: '' });
    const evidence = theirView.competencies.flatMap((c) => c.evidence.map((e) => e.attemptId));
    expect(evidence).not.toContain(assignedSubmitted);
    expect(evidence).not.toContain(practiceSubmitted);
    // Her own class's instructor sees their class's work; she and the admin see all of it.
    const ownView = progressResponseSchema.parse((await ownA.get(`/api/sign-offs/students/${adaId}`).expect(200)).body);
    const ownOutput = ownView.competencies.find((c) => c.competency === 'output')!;
    expect(ownOutput.evidence.map((e) => e.attemptId)).toEqual([assignedSubmitted]);
    expect(ownOutput.signOff).toMatchObject({ attemptId: assignedSubmitted, note: 'Day section: clean pile technique' });
    for (const whole of [adaAgent, adminAgent]) {
      const all = progressResponseSchema.parse((await whole.get(`/api/sign-offs/students/${adaId}`).expect(200)).body);
      expect(all.competencies.find((c) => c.competency === 'output')!.evidence.map((e) => e.attemptId).sort()).toEqual([assignedSubmitted, theirSubmitted].sort());
    }
    // The night section's sign-off sheet lists her sign-off the same way.
    const csv = (await other.get(`/api/sign-offs/classes/${theirs.classId}/sign-offs.csv`).expect(200)).text;
    expect(csv).toContain(ada.email);
    expect(csv).not.toContain('Day section: clean pile technique');
    expect(csv).not.toContain(`,${assignedSubmitted},`);
  });

  it('cannot withdraw another instructor’s sign-off; its author and an admin can', async () => {
    const refused = await other.delete(`/api/sign-offs/${signOffId}`);
    expect(refused.status).toBe(403);
    expect(refused.body.error.message).toMatch(/Only the instructor who signed this off, or an admin/);
    expect(await t.ctx.db.select({ id: signOffs.id }).from(signOffs).where(eq(signOffs.id, signOffId))).toHaveLength(1);
    await ownA.delete(`/api/sign-offs/${signOffId}`).expect(204);
    const again = (await ownA.post('/api/sign-offs').send({ attemptId: assignedSubmitted, competency: 'output' }).expect(201)).body.signOff.id as number;
    await adminAgent.delete(`/api/sign-offs/${again}`).expect(204);
    expect(await t.ctx.db.select({ id: signOffs.id }).from(signOffs).where(and(eq(signOffs.userId, adaId), eq(signOffs.competency, 'output')))).toHaveLength(0);
  });

  it('learns no account’s role from the enrolment form or a roster', async () => {
    const answers = [];
    for (const email of [instructor.email, admin.email]) {
      const res = await other.post(`/api/classes/${theirs.classId}/students`).send({ email });
      expect(res.status).toBe(409);
      expect(res.body.error).toMatchObject({ message: NOT_A_STUDENT, field: 'email' });
      answers.push(res.text);
    }
    expect(answers[0]).toBe(answers[1]);
    const preview = await other
      .post(`/api/classes/${theirs.classId}/roster/preview`)
      .attach('file', Buffer.from(`name,email\nRune Someone,${instructor.email}\nMarisol Someone,${admin.email}\n`), { filename: 'night.csv', contentType: 'text/csv' })
      .expect(200);
    const messages = (preview.body.rows as { message?: string }[]).map((r) => r.message);
    // The same words for both, naming no role.
    expect(messages).toEqual([NOT_A_STUDENT, NOT_A_STUDENT]);
    expect(NOT_A_STUDENT).not.toMatch(/instructor|admin account|staff/i);
  });
});
