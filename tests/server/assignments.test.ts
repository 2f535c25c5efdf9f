import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DEMO_PEOPLE } from '../../server/db/demo-people.ts';
import { attempts } from '../../server/db/schema.ts';
import { blankScenario } from '../../shared/scenario.ts';
import { signIn, startTestApp, type Agent, type TestApp } from './support.ts';

const admin = DEMO_PEOPLE.find((p) => p.role === 'admin')!;
const [rune, tamsin] = DEMO_PEOPLE.filter((p) => p.role === 'instructor');
const students = DEMO_PEOPLE.filter((p) => p.role === 'student');

let t: TestApp;
let asRune: Agent;
let asTamsin: Agent;
let asAdmin: Agent;
let asAda: Agent;
let asHana: Agent;
let runeClass: number;
let tamsinClass: number;

beforeAll(async () => {
  t = await startTestApp();
  [asRune, asTamsin, asAdmin, asAda, asHana] = await Promise.all([
    signIn(t.app, rune!.email),
    signIn(t.app, tamsin!.email),
    signIn(t.app, admin.email),
    signIn(t.app, students[0]!.email),
    signIn(t.app, students.at(-1)!.email),
  ]);
  runeClass = ((await asRune.get('/api/classes').expect(200)).body.classes as { id: number }[])[0]!.id;
  tamsinClass = ((await asTamsin.get('/api/classes').expect(200)).body.classes as { id: number }[])[0]!.id;
});
afterAll(async () => {
  await t.close();
});

const day = 24 * 3600 * 1000;
const iso = (offsetDays: number) => new Date(Date.now() + offsetDays * day).toISOString();

async function libraryScenario(agent: Agent, q: string): Promise<{ id: number; publishedVersion: number | null }> {
  return (await agent.get('/api/scenarios').query({ q }).expect(200)).body.scenarios[0];
}

describe('assignments', () => {
  it('lists the seeded assignments of a class to its instructor only', async () => {
    const res = await asRune.get('/api/assignments').query({ classId: runeClass }).expect(200);
    expect(res.body.assignments.length).toBeGreaterThanOrEqual(2);
    await asTamsin.get('/api/assignments').query({ classId: runeClass }).expect(403);
    await asAda.get('/api/assignments').query({ classId: runeClass }).expect(403);
    const missing = await asRune.get('/api/assignments').expect(400);
    expect(missing.body.error.field).toBe('classId');
  });

  it('assigns the published version by default, or a named version, and shows it on the students’ list once open', async () => {
    const s = await libraryScenario(asRune, 'Corvane Linden');
    const res = await asRune
      .post('/api/assignments')
      .send({ classId: runeClass, scenarioId: s.id, opensAt: iso(-0.01), dueAt: iso(5), attemptsAllowed: 2, showCurveAfter: false, showFeedbackAfter: true, title: 'Pre-purchase check' })
      .expect(201);
    expect(res.body.assignment).toMatchObject({ classId: runeClass, scenarioVersion: 1, attemptsAllowed: 2, showCurveAfter: false, title: 'Pre-purchase check' });

    const mine = (await asAda.get('/api/assignments/mine').expect(200)).body.assignments as Record<string, unknown>[];
    const listed = mine.find((a) => a.id === res.body.assignment.id)!;
    expect(listed).toMatchObject({ title: 'Pre-purchase check', attemptsUsed: 0, attemptsAllowed: 2, closed: false, vehicleName: 'Corvane Linden midsize sedan' });
    const raw = JSON.stringify(mine);
    for (const word of ['faults', 'severity01', 'testsExpected', 'params', 'scenarioVersionId']) expect(raw).not.toContain(word);
    // A student of another class does not see it.
    const other = (await asHana.get('/api/assignments/mine').expect(200)).body.assignments as { id: number }[];
    expect(other.some((a) => a.id === res.body.assignment.id)).toBe(false);
  });

  it('keeps not-yet-open assignments off the student’s list and counts attempts used', async () => {
    const s = await libraryScenario(asRune, 'Orland Fen');
    const later = await asRune.post('/api/assignments').send({ classId: runeClass, scenarioId: s.id, opensAt: iso(3), dueAt: iso(9), attemptsAllowed: 1 }).expect(201);
    const now = await asRune.post('/api/assignments').send({ classId: runeClass, scenarioId: s.id, opensAt: iso(-1), dueAt: iso(9), attemptsAllowed: 3 }).expect(201);
    const adaId = (await asAdmin.get('/api/users').query({ role: 'student' }).expect(200)).body.users.find((u: { email: string }) => u.email === students[0]!.email).id;
    await t.ctx.db.insert(attempts).values({ userId: adaId, scenarioVersionId: now.body.assignment.scenarioVersionId, assignmentId: now.body.assignment.id, mode: 'assignment', seed: 7 });
    const mine = (await asAda.get('/api/assignments/mine').expect(200)).body.assignments as { id: number; attemptsUsed: number }[];
    expect(mine.some((a) => a.id === later.body.assignment.id)).toBe(false);
    expect(mine.find((a) => a.id === now.body.assignment.id)!.attemptsUsed).toBe(1);
    await asAda.get(`/api/assignments/${later.body.assignment.id}`).expect(403);
    const one = await asAda.get(`/api/assignments/${now.body.assignment.id}`).expect(200);
    expect(one.body.attemptsUsed).toBe(1);
    expect(one.body.scenario).not.toHaveProperty('faults');
    expect(JSON.stringify(one.body.scenario)).not.toContain('field-open-');
    await asHana.get(`/api/assignments/${now.body.assignment.id}`).expect(403);
    // Started assignments cannot be deleted; unstarted ones can.
    await asRune.delete(`/api/assignments/${now.body.assignment.id}`).expect(409);
    await asTamsin.delete(`/api/assignments/${later.body.assignment.id}`).expect(403);
    await asRune.delete(`/api/assignments/${later.body.assignment.id}`).expect(204);
  });

  it('refuses bad input naming the field, and nothing is created', async () => {
    const s = await libraryScenario(asRune, 'Harlan Ridge');
    const before = (await asRune.get('/api/assignments').query({ classId: runeClass }).expect(200)).body.assignments.length;
    const backwards = await asRune.post('/api/assignments').send({ classId: runeClass, scenarioId: s.id, opensAt: iso(2), dueAt: iso(1), attemptsAllowed: 1 }).expect(400);
    expect(backwards.body.error.field).toBe('dueAt');
    const zero = await asRune.post('/api/assignments').send({ classId: runeClass, scenarioId: s.id, opensAt: iso(0), dueAt: iso(1), attemptsAllowed: 0 }).expect(400);
    expect(zero.body.error.field).toBe('attemptsAllowed');
    const date = await asRune.post('/api/assignments').send({ classId: runeClass, scenarioId: s.id, opensAt: 'next tuesday', dueAt: iso(1), attemptsAllowed: 1 }).expect(400);
    expect(date.body.error.field).toBe('opensAt');
    const other = await libraryScenario(asRune, 'Corvane Linden');
    const detail = (await asRune.get(`/api/scenarios/${other.id}`).expect(200)).body as { latestVersionId: number };
    const foreign = await asRune.post('/api/assignments').send({ classId: runeClass, scenarioId: s.id, scenarioVersionId: detail.latestVersionId, opensAt: iso(0), dueAt: iso(1), attemptsAllowed: 1 }).expect(400);
    expect(foreign.body.error.field).toBe('scenarioVersionId');
    const after = (await asRune.get('/api/assignments').query({ classId: runeClass }).expect(200)).body.assignments.length;
    expect(after).toBe(before);
  });

  it('refuses another instructor’s class, a private scenario of someone else, and unpublished scenarios without a version', async () => {
    const s = await libraryScenario(asRune, 'Harlan Ridge');
    await asTamsin.post('/api/assignments').send({ classId: runeClass, scenarioId: s.id, opensAt: iso(0), dueAt: iso(1), attemptsAllowed: 1 }).expect(403);
    const d = blankScenario();
    d.title = 'Tamsin private';
    const priv = await asTamsin.post('/api/scenarios').send({ definition: d, visibility: 'private' }).expect(201);
    await asRune.post('/api/assignments').send({ classId: runeClass, scenarioId: priv.body.id, opensAt: iso(0), dueAt: iso(1), attemptsAllowed: 1 }).expect(404);
    const unpublished = await asTamsin.post('/api/assignments').send({ classId: tamsinClass, scenarioId: priv.body.id, opensAt: iso(0), dueAt: iso(1), attemptsAllowed: 1 }).expect(400);
    expect(unpublished.body.error.field).toBe('scenarioVersionId');
    const named = await asTamsin
      .post('/api/assignments')
      .send({ classId: tamsinClass, scenarioId: priv.body.id, scenarioVersionId: priv.body.latestVersionId, opensAt: iso(0), dueAt: iso(1), attemptsAllowed: 1 })
      .expect(201);
    expect(named.body.assignment.scenarioVersion).toBe(1);
    await asAda.post('/api/assignments').send({ classId: runeClass, scenarioId: s.id, opensAt: iso(0), dueAt: iso(1), attemptsAllowed: 1 }).expect(403);
  });

  it('keeps the version an assignment was given even after the scenario is edited', async () => {
    const d = blankScenario();
    d.title = 'Rune versioned for assignment';
    const created = await asRune.post('/api/scenarios').send({ definition: d, visibility: 'shared' }).expect(201);
    await asRune.post(`/api/scenarios/${created.body.id}/publish`).send({ versionId: created.body.latestVersionId }).expect(200);
    const a = await asRune.post('/api/assignments').send({ classId: runeClass, scenarioId: created.body.id, opensAt: iso(-1), dueAt: iso(3), attemptsAllowed: 1 }).expect(201);
    await asRune.put(`/api/scenarios/${created.body.id}`).send({ definition: { ...d, title: 'Rune versioned, edited' } }).expect(200);
    const list = (await asRune.get('/api/assignments').query({ classId: runeClass }).expect(200)).body.assignments as { id: number; scenarioVersion: number }[];
    expect(list.find((x) => x.id === a.body.assignment.id)!.scenarioVersion).toBe(1);
    const mine = (await asAda.get('/api/assignments/mine').expect(200)).body.assignments as { id: number; title: string }[];
    expect(mine.find((x) => x.id === a.body.assignment.id)!.title).toBe('Rune versioned for assignment');
  });

  it('changes an assignment’s dates and attempts, naming a field that does not fit, and changes nothing then', async () => {
    const s = await libraryScenario(asRune, 'Orland Fen');
    const a = (await asRune.post('/api/assignments').send({ classId: runeClass, scenarioId: s.id, opensAt: iso(-1), dueAt: iso(2), attemptsAllowed: 1, title: 'Edit me' }).expect(201)).body.assignment;
    const changed = await asRune.patch(`/api/assignments/${a.id}`).send({ dueAt: iso(10), attemptsAllowed: 4 }).expect(200);
    expect(changed.body.assignment).toMatchObject({ id: a.id, attemptsAllowed: 4, title: 'Edit me' });
    expect(Date.parse(changed.body.assignment.dueAt)).toBeGreaterThan(Date.now() + 9 * day);
    const mine = (await asAda.get('/api/assignments/mine').expect(200)).body.assignments as { id: number; attemptsAllowed: number }[];
    expect(mine.find((x) => x.id === a.id)!.attemptsAllowed).toBe(4);
    // A due date before the opening is refused by name, and the assignment stays as it was.
    const backwards = await asRune.patch(`/api/assignments/${a.id}`).send({ dueAt: iso(-3) }).expect(400);
    expect(backwards.body.error.field).toBe('dueAt');
    const late = await asRune.patch(`/api/assignments/${a.id}`).send({ opensAt: iso(20) }).expect(400);
    expect(late.body.error.field).toBe('opensAt');
    expect((await asRune.patch(`/api/assignments/${a.id}`).send({ attemptsAllowed: 0 }).expect(400)).body.error.field).toBe('attemptsAllowed');
    expect((await asRune.patch(`/api/assignments/${a.id}`).send({ colour: 'red' }).expect(400)).body.error.message).toMatch(/colour/);
    await asRune.patch(`/api/assignments/${a.id}`).send({}).expect(400);
    const kept = (await asRune.get(`/api/assignments/${a.id}`).expect(200)).body.assignment;
    expect(kept).toMatchObject({ attemptsAllowed: 4, dueAt: changed.body.assignment.dueAt, opensAt: a.opensAt });
    await asTamsin.patch(`/api/assignments/${a.id}`).send({ attemptsAllowed: 9 }).expect(403);
  });

  it('extends one student: their own due date and attempts let them start after the others cannot, and the list says who has not started or submitted', async () => {
    const s = await libraryScenario(asRune, 'Orland Fen');
    const a = (await asRune.post('/api/assignments').send({ classId: runeClass, scenarioId: s.id, opensAt: iso(-3), dueAt: iso(-1), attemptsAllowed: 1, title: 'Closed last night' }).expect(201)).body.assignment;
    const adaId = (await asAdmin.get('/api/users').query({ role: 'student' }).expect(200)).body.users.find((u: { email: string }) => u.email === students[0]!.email).id as number;
    // Past its due date: nobody can start.
    expect((await asAda.post('/api/attempts').send({ assignmentId: a.id }).expect(409)).body.error.message).toMatch(/due date/);
    const before = (await asRune.get(`/api/assignments/${a.id}/students`).expect(200)).body.students as { studentId: number; progress: string }[];
    expect(before.length).toBeGreaterThan(1);
    expect(before.every((x) => x.progress === 'not-started')).toBe(true);

    await asRune.put(`/api/assignments/${a.id}/extensions/${adaId}`).send({ dueAt: iso(4), extraAttempts: 1 }).expect(204);
    const listed = ((await asAda.get('/api/assignments/mine').expect(200)).body.assignments as { id: number; closed: boolean; attemptsAllowed: number }[]).find((x) => x.id === a.id)!;
    expect(listed).toMatchObject({ closed: false, attemptsAllowed: 2 });
    const started = await asAda.post('/api/attempts').send({ assignmentId: a.id }).expect(201);
    // Another student of the class still cannot.
    const asBo = await signIn(t.app, students[1]!.email);
    await asBo.post('/api/attempts').send({ assignmentId: a.id }).expect(409);

    const after = (await asRune.get(`/api/assignments/${a.id}/students`).expect(200)).body.students as { studentId: number; progress: string; attemptsAllowed: number; extension: unknown; latestAttemptId: number | null }[];
    const ada = after.find((x) => x.studentId === adaId)!;
    expect(ada).toMatchObject({ progress: 'in-progress', attemptsAllowed: 2, latestAttemptId: started.body.attempt.id });
    expect(ada.extension).toMatchObject({ extraAttempts: 1 });
    expect(after.filter((x) => x.studentId !== adaId).every((x) => x.progress === 'not-started' && x.extension === null)).toBe(true);

    // Bad terms are named; a student of another class is refused; removing the extension restores the assignment's terms.
    expect((await asRune.put(`/api/assignments/${a.id}/extensions/${adaId}`).send({ dueAt: iso(-10), extraAttempts: 0 }).expect(400)).body.error.field).toBe('dueAt');
    expect((await asRune.put(`/api/assignments/${a.id}/extensions/${adaId}`).send({ dueAt: null, extraAttempts: 0 }).expect(400)).body.error.field).toBe('dueAt');
    expect((await asRune.put(`/api/assignments/${a.id}/extensions/${adaId}`).send({ dueAt: null, extraAttempts: 50 }).expect(400)).body.error.field).toBe('extraAttempts');
    const hanaId = (await asAdmin.get('/api/users').query({ role: 'student' }).expect(200)).body.users.find((u: { email: string }) => u.email === students.at(-1)!.email).id as number;
    expect((await asRune.put(`/api/assignments/${a.id}/extensions/${hanaId}`).send({ dueAt: iso(4), extraAttempts: 0 }).expect(400)).body.error.field).toBe('userId');
    await asTamsin.put(`/api/assignments/${a.id}/extensions/${adaId}`).send({ dueAt: iso(4), extraAttempts: 0 }).expect(403);
    await asRune.delete(`/api/assignments/${a.id}/extensions/${adaId}`).expect(204);
    expect(((await asAda.get('/api/assignments/mine').expect(200)).body.assignments as { id: number; closed: boolean }[]).find((x) => x.id === a.id)!.closed).toBe(true);
  });

  it('is refused to staff on the student list', async () => {
    await asRune.get('/api/assignments/mine').expect(403);
  });
});
