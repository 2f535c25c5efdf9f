import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { and, asc, eq } from 'drizzle-orm';
import Papa from 'papaparse';
import { attempts, users } from '../../server/db/schema.ts';
import { GRADES_CSV_COLUMNS, compareResponseSchema } from '../../shared/api/compare.ts';
import { signIn, startTestApp, type TestApp } from './support.ts';
import { instructor, makeAttempt, makeClass, makeSubmitted, otherInstructor, students, type ClassFixture } from './live-fixtures.ts';

let t: TestApp;
let fx: ClassFixture;

beforeAll(async () => {
  t = await startTestApp();
  fx = await makeClass(t.ctx.db, { students: 4 });
  const [a, b, c, d] = fx.studentIds as [number, number, number, number];
  // Ada: two attempts; the later one counts.
  await makeSubmitted(t.ctx.db, fx, a, { timeToDiagnosisMs: 900_000, given: 'none', grade: 40, submittedAt: new Date(Date.now() - 3_600_000) });
  await makeSubmitted(t.ctx.db, fx, a, {
    timeToDiagnosisMs: 300_000,
    given: 'diode-open',
    grade: 92,
    verdicts: [
      { test: 'output', ok: true },
      { test: 'ripple', ok: true },
    ],
  });
  await makeSubmitted(t.ctx.db, fx, b, {
    timeToDiagnosisMs: 480_000,
    given: 'stator-phase-open',
    grade: 55,
    verdicts: [
      { test: 'output', ok: true },
      { test: 'ripple', ok: false },
    ],
    mistakes: ['reversed-clamp', 'pile-overheated'],
  });
  await makeSubmitted(t.ctx.db, fx, c, { timeToDiagnosisMs: 480_000, given: 'diode-open', grade: 80, verdicts: [{ test: 'output', ok: false }] });
  // Dalia is still at the bench.
  await makeAttempt(t.ctx.db, fx, d);
});
afterAll(async () => {
  await t.close();
});

describe('class comparison', () => {
  it('gives the instructor each student’s latest submitted attempt with time, correctness and mistakes', async () => {
    const agent = await signIn(t.app, instructor.email);
    const res = await agent.get(`/api/compare/assignments/${fx.assignmentId}`).expect(200);
    const body = compareResponseSchema.parse(res.body);
    if (body.viewer !== 'instructor') throw new Error('expected the instructor view');
    expect(body.assignment).toMatchObject({ enrolled: 4, submitted: 3, title: 'Week 3 bench check' });
    const byName = Object.fromEntries(body.rows.map((r) => [r.studentName, r]));
    expect(byName[students[0]!.name]).toMatchObject({ timeToDiagnosisMs: 300_000, correct: true, grade: 92, attemptCount: 2, mistakes: 0 });
    expect(byName[students[1]!.name]).toMatchObject({ timeToDiagnosisMs: 480_000, correct: false, mistakes: 2, mistakeKinds: ['reversed-clamp', 'pile-overheated'] });
    expect(byName[students[3]!.name]).toBeUndefined();
    expect(body.distribution.timesMs).toEqual([300_000, 480_000, 480_000]);
    expect(body.distribution.medianMs).toBe(480_000);
    // Two of three named the open diode; output verdicts 2 of 3 right, ripple 1 of 2.
    expect(body.accuracyByFault).toEqual([{ fault: 'diode-open', label: 'Open rectifier diode', attempts: 3, named: 2 }]);
    expect(body.accuracyByTest.find((x) => x.test === 'output')).toMatchObject({ verdicts: 3, right: 2 });
    expect(body.accuracyByTest.find((x) => x.test === 'ripple')).toMatchObject({ verdicts: 2, right: 1 });
  });

  it('shows a student their own place in the distribution and no classmate’s name', async () => {
    const agent = await signIn(t.app, students[1]!.email);
    const res = await agent.get(`/api/compare/assignments/${fx.assignmentId}`).expect(200);
    const body = compareResponseSchema.parse(res.body);
    if (body.viewer !== 'student') throw new Error('expected the student view');
    expect(body.mine).toMatchObject({ studentName: students[1]!.name, timeToDiagnosisMs: 480_000 });
    expect(body.distribution).toMatchObject({ timesMs: [300_000, 480_000, 480_000], mineMs: 480_000, myPlace: 2 });
    const raw = JSON.stringify(res.body);
    for (const other of [students[0]!, students[2]!, students[3]!]) {
      expect(raw).not.toContain(other.name);
      expect(raw).not.toContain(other.email);
    }
    // Nothing about the fault for a student: the comparison is no answer key.
    expect(raw).not.toContain('diode-open');
  });

  it('a student who has not submitted sees the distribution without a place', async () => {
    const agent = await signIn(t.app, students[3]!.email);
    const body = compareResponseSchema.parse((await agent.get(`/api/compare/assignments/${fx.assignmentId}`).expect(200)).body);
    expect(body.viewer).toBe('student');
    if (body.viewer === 'student') expect(body.distribution.myPlace).toBeNull();
  });

  it('refuses people outside the class', async () => {
    const outsider = await signIn(t.app, otherInstructor.email);
    await outsider.get(`/api/compare/assignments/${fx.assignmentId}`).expect(403);
    await outsider.get(`/api/compare/assignments/${fx.assignmentId}/grades.csv`).expect(403);
    const stranger = await signIn(t.app, students[5]!.email);
    await stranger.get(`/api/compare/assignments/${fx.assignmentId}`).expect(403);
    const student = await signIn(t.app, students[0]!.email);
    await student.get(`/api/compare/assignments/${fx.assignmentId}/grades.csv`).expect(403);
    const bad = await student.get('/api/compare/assignments/abc').expect(400);
    expect(bad.body.error.field).toBe('id');
  });

  it('exports the grades as CSV that matches the database, row for row, in words, marking the attempt that counts', async () => {
    const agent = await signIn(t.app, instructor.email);
    const res = await agent.get(`/api/compare/assignments/${fx.assignmentId}/grades.csv`).expect(200);
    expect(res.headers['content-type']).toMatch(/text\/csv/);
    const parsed = Papa.parse<Record<string, string>>(res.text.trim(), { header: true });
    expect(parsed.errors).toEqual([]);
    expect(parsed.meta.fields).toEqual([...GRADES_CSV_COLUMNS]);
    const db = await t.ctx.db
      .select({ id: attempts.id, name: users.name, email: users.email, grade: attempts.grade, submittedAt: attempts.submittedAt, time: attempts.timeToDiagnosisMs, verified: attempts.verified })
      .from(attempts)
      .innerJoin(users, eq(users.id, attempts.userId))
      .where(and(eq(attempts.assignmentId, fx.assignmentId), eq(attempts.status, 'submitted')))
      .orderBy(asc(users.name), asc(attempts.id));
    expect(parsed.data.length).toBe(db.length);
    parsed.data.forEach((row, i) => {
      const d = db[i]!;
      expect(row).toMatchObject({
        Attempt: String(d.id),
        Student: d.name,
        'E-mail': d.email,
        Grade: String(d.grade),
        'Submitted at': d.submittedAt!.toISOString(),
        'Readings verified': d.verified ? 'yes' : 'no',
        'Time to diagnosis (s)': String(d.time! / 1000),
      });
    });
    // Ada's earlier attempt is listed but does not count; her later one does; everyone else's single attempt counts.
    const ada = parsed.data.filter((r) => r.Student === students[0]!.name);
    expect(ada.map((r) => [r.Grade, r['Counts for the grade']])).toEqual([
      ['40', 'no'],
      ['92', 'yes'],
    ]);
    expect(parsed.data.filter((r) => r.Student !== students[0]!.name).every((r) => r['Counts for the grade'] === 'yes')).toBe(true);
    // Faults and mistakes by name, never the model's codes (common practice, no source: an export is read by people).
    const bo = parsed.data.find((r) => r.Student === students[1]!.name)!;
    expect(bo).toMatchObject({ 'Fault named': 'Open stator phase', 'Fault correct': 'no', Mistakes: '2', 'Mistakes made': 'Clamp reversed; Pile overheated' });
    expect(res.text).not.toMatch(/diode-open|stator-phase-open|reversed-clamp|pile-overheated|\bnone\b/);
  });
});
