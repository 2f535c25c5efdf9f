import { asc, eq, inArray } from 'drizzle-orm';
import { alias } from 'drizzle-orm/pg-core';
import Papa from 'papaparse';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { signOffs, users } from '../../server/db/schema.ts';
import { SIGN_OFFS_CSV_COLUMNS, progressResponseSchema } from '../../shared/api/compare.ts';
import { COMPETENCIES, COMPETENCY_LABELS } from '../../shared/competencies.ts';
import { signIn, startTestApp, type TestApp } from './support.ts';
import { instructor, makeAttempt, makeClass, makeSubmitted, otherInstructor, students, type ClassFixture } from './live-fixtures.ts';

let t: TestApp;
let fx: ClassFixture;
let graded: number;
let running: number;

beforeAll(async () => {
  t = await startTestApp();
  fx = await makeClass(t.ctx.db, { students: 2 });
  graded = await makeSubmitted(t.ctx.db, fx, fx.studentIds[0]!, {
    timeToDiagnosisMs: 400_000,
    given: 'diode-open',
    grade: 88,
    verdicts: [
      { test: 'output', ok: true },
      { test: 'regulated-voltage', ok: false },
    ],
  });
  running = await makeAttempt(t.ctx.db, fx, fx.studentIds[1]!);
});
afterAll(async () => {
  await t.close();
});

describe('competency sign-off', () => {
  it('the family’s tests are the competencies', () => {
    expect(COMPETENCIES).toEqual(['battery-ocv', 'battery-load', 'regulated-voltage', 'output', 'voltage-drop-positive', 'voltage-drop-ground', 'ripple', 'key-off-draw', 'cranking']);
  });

  it('an instructor signs off a competency from a graded attempt and the student sees it on their progress', async () => {
    const teacher = await signIn(t.app, instructor.email);
    const res = await teacher.post('/api/sign-offs').send({ attemptId: graded, competency: 'output', note: 'Clean pile technique' }).expect(201);
    expect(res.body.signOff).toMatchObject({ userId: fx.studentIds[0], competency: 'output', attemptId: graded, signedByName: instructor.name });

    const student = await signIn(t.app, students[0]!.email);
    const progress = progressResponseSchema.parse((await student.get('/api/sign-offs/me').expect(200)).body);
    const output = progress.competencies.find((c) => c.competency === 'output')!;
    expect(output.signOff).toMatchObject({ note: 'Clean pile technique', signedByName: instructor.name });
    expect(output).toMatchObject({ gradedAttempts: 1, verdicts: 1, verdictsRight: 1 });
    const regulated = progress.competencies.find((c) => c.competency === 'regulated-voltage')!;
    expect(regulated).toMatchObject({ signOff: null, verdicts: 1, verdictsRight: 0 });
    expect(regulated.evidence.map((e) => e.attemptId)).toEqual([graded]);
    // Each attempt behind a competency says whether its verdict was right, and the trend lists the graded attempts.
    expect(output.evidence[0]).toMatchObject({ attemptId: graded, verdictOk: true });
    expect(regulated.evidence[0]).toMatchObject({ attemptId: graded, verdictOk: false });
    expect(progress.attempts).toEqual([
      expect.objectContaining({ attemptId: graded, grade: 88, timeToDiagnosisMs: 400_000, faultCorrect: true }),
    ]);

    // The same competency twice is a conflict, named.
    const again = await teacher.post('/api/sign-offs').send({ attemptId: graded, competency: 'output' }).expect(409);
    expect(again.body.error.field).toBe('competency');
  });

  it('refuses an ungraded attempt, a test the scenario did not expect, bad input, students and outsiders', async () => {
    const teacher = await signIn(t.app, instructor.email);
    expect((await teacher.post('/api/sign-offs').send({ attemptId: running, competency: 'output' }).expect(409)).body.error.field).toBe('attemptId');
    expect((await teacher.post('/api/sign-offs').send({ attemptId: graded, competency: 'cranking' }).expect(400)).body.error.field).toBe('competency');
    expect((await teacher.post('/api/sign-offs').send({ attemptId: graded, competency: 'juggling' }).expect(400)).body.error.field).toBe('competency');
    expect((await teacher.post('/api/sign-offs').send({ competency: 'output' }).expect(400)).body.error.field).toBe('attemptId');
    const student = await signIn(t.app, students[0]!.email);
    await student.post('/api/sign-offs').send({ attemptId: graded, competency: 'battery-ocv' }).expect(403);
    const outsider = await signIn(t.app, otherInstructor.email);
    await outsider.post('/api/sign-offs').send({ attemptId: graded, competency: 'battery-ocv' }).expect(403);
    await outsider.get(`/api/sign-offs/students/${fx.studentIds[0]}`).expect(403);
    // A classmate cannot read another student's progress.
    const classmate = await signIn(t.app, students[1]!.email);
    await classmate.get(`/api/sign-offs/students/${fx.studentIds[0]}`).expect(403);
    const rows = await t.ctx.db.select({ competency: signOffs.competency }).from(signOffs).where(eq(signOffs.userId, fx.studentIds[0]!));
    expect(rows.map((r) => r.competency)).toEqual(['output']);
  });

  it('exports the class’s sign-offs as CSV that matches the database', async () => {
    const teacher = await signIn(t.app, instructor.email);
    await teacher.post('/api/sign-offs').send({ attemptId: graded, competency: 'battery-ocv', note: 'Rested "surface charge" off first, then read' }).expect(201);
    const res = await teacher.get(`/api/sign-offs/classes/${fx.classId}/sign-offs.csv`).expect(200);
    const parsed = Papa.parse<Record<string, string>>(res.text.trim(), { header: true });
    expect(parsed.errors).toEqual([]);
    expect(parsed.meta.fields).toEqual([...SIGN_OFFS_CSV_COLUMNS]);
    const student = alias(users, 'student');
    const signer = alias(users, 'signer');
    const db = await t.ctx.db
      .select({ name: student.name, email: student.email, competency: signOffs.competency, attemptId: signOffs.attemptId, signer: signer.name, at: signOffs.createdAt, note: signOffs.note })
      .from(signOffs)
      .innerJoin(student, eq(student.id, signOffs.userId))
      .leftJoin(signer, eq(signer.id, signOffs.signedBy))
      .where(inArray(signOffs.userId, fx.studentIds))
      .orderBy(asc(student.name), asc(signOffs.competency));
    expect(parsed.data).toEqual(
      db.map((d) => ({
        Student: d.name,
        'E-mail': d.email,
        Competency: COMPETENCY_LABELS[d.competency as keyof typeof COMPETENCY_LABELS],
        Attempt: String(d.attemptId),
        'Signed by': d.signer,
        'Signed at': d.at.toISOString(),
        Note: d.note,
      })),
    );
    expect(parsed.data).toHaveLength(2);
    // Names, never the competency codes.
    expect(res.text).not.toMatch(/battery-ocv|key-off-draw/);
  });

  it('an instructor can withdraw a sign-off', async () => {
    const teacher = await signIn(t.app, instructor.email);
    const made = await teacher.post('/api/sign-offs').send({ attemptId: graded, competency: 'regulated-voltage' }).expect(201);
    await teacher.delete(`/api/sign-offs/${made.body.signOff.id}`).expect(204);
    const left = await t.ctx.db.select({ id: signOffs.id }).from(signOffs).where(eq(signOffs.id, made.body.signOff.id));
    expect(left).toEqual([]);
  });
});
