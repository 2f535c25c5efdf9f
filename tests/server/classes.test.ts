import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DEMO_PEOPLE } from '../../server/db/demo-people.ts';
import { NOT_A_STUDENT } from '../../server/classes/queries.ts';
import { anonymousAgent, linkToken, signIn, startTestApp, waitForMail, type Agent, type TestApp } from './support.ts';

const admin = DEMO_PEOPLE.find((p) => p.role === 'admin')!;
const [rune, tamsin] = DEMO_PEOPLE.filter((p) => p.role === 'instructor');
const students = DEMO_PEOPLE.filter((p) => p.role === 'student');

let t: TestApp;
let asRune: Agent;
let asTamsin: Agent;
let asAdmin: Agent;
let asAda: Agent;

beforeAll(async () => {
  t = await startTestApp();
  [asRune, asTamsin, asAdmin, asAda] = await Promise.all([signIn(t.app, rune!.email), signIn(t.app, tamsin!.email), signIn(t.app, admin.email), signIn(t.app, students[0]!.email)]);
});
afterAll(async () => {
  await t.close();
});

type ClassBody = { id: number; name: string; instructors: { name: string }[]; studentCount: number; students: { id: number; email: string; hasPassword: boolean }[] };

async function runeClassId(): Promise<number> {
  const list = (await asRune.get('/api/classes').expect(200)).body.classes as ClassBody[];
  return list[0]!.id;
}

describe('classes', () => {
  it('shows an instructor only the classes they teach, a student only theirs, and the admin all', async () => {
    const runes = (await asRune.get('/api/classes').expect(200)).body.classes as ClassBody[];
    const tamsins = (await asTamsin.get('/api/classes').expect(200)).body.classes as ClassBody[];
    const all = (await asAdmin.get('/api/classes').expect(200)).body.classes as ClassBody[];
    const adas = (await asAda.get('/api/classes').expect(200)).body.classes as ClassBody[];
    expect(runes.length).toBeGreaterThan(0);
    expect(runes.every((c) => c.instructors.some((i) => i.name === rune!.name))).toBe(true);
    expect(tamsins.every((c) => c.instructors.some((i) => i.name === tamsin!.name))).toBe(true);
    expect(runes.some((c) => tamsins.some((d) => d.id === c.id))).toBe(false);
    expect(all.length).toBe(runes.length + tamsins.length);
    expect(adas.map((c) => c.id)).toEqual([runes[0]!.id]);
    const anon = await anonymousAgent(t.app);
    await anon.get('/api/classes').expect(401);
  });

  it('refuses another instructor’s class and students on the class page', async () => {
    const id = await runeClassId();
    const detail = (await asRune.get(`/api/classes/${id}`).expect(200)).body as ClassBody;
    expect(detail.students.length).toBe(detail.studentCount);
    await asTamsin.get(`/api/classes/${id}`).expect(403);
    await asAda.get(`/api/classes/${id}`).expect(403);
    await asAdmin.get(`/api/classes/${id}`).expect(200);
    await asRune.get('/api/classes/999999').expect(404);
    const bad = await asRune.get('/api/classes/abc').expect(400);
    expect(bad.body.error.field).toBe('id');
  });

  it('creates a class taught by the instructor who makes it; an admin names its instructors', async () => {
    const res = await asTamsin.post('/api/classes').send({ name: 'AUT 242 Advanced Electrical', term: 'Spring 2027' }).expect(201);
    expect((res.body as ClassBody).instructors.map((i) => i.name)).toEqual([tamsin!.name]);
    await asRune.get(`/api/classes/${res.body.id}`).expect(403);
    const runeId = (await asAdmin.get('/api/users').query({ role: 'instructor' }).expect(200)).body.users.find((u: { email: string }) => u.email === rune!.email).id;
    const byAdmin = await asAdmin.post('/api/classes').send({ name: 'Saturday workshop', instructorIds: [runeId] }).expect(201);
    expect(byAdmin.body.instructors.map((i: { name: string }) => i.name)).toEqual([rune!.name]);
    const adaId = (await asAdmin.get('/api/users').query({ role: 'student' }).expect(200)).body.users[0].id;
    const wrong = await asAdmin.post('/api/classes').send({ name: 'Bad staff', instructorIds: [adaId] }).expect(400);
    expect(wrong.body.error.field).toBe('instructorIds.0');
    const short = await asRune.post('/api/classes').send({ name: 'x' }).expect(400);
    expect(short.body.error.field).toBe('name');
    await asAda.post('/api/classes').send({ name: 'Student class' }).expect(403);
  });

  it('enrols an existing student and removes them again', async () => {
    const id = await runeClassId();
    const outsider = students.at(-1)!;
    const res = await asRune.post(`/api/classes/${id}/students`).send({ email: outsider.email.toUpperCase() }).expect(201);
    expect(res.body).toMatchObject({ created: false, invited: false, student: { email: outsider.email } });
    const again = await asRune.post(`/api/classes/${id}/students`).send({ email: outsider.email }).expect(409);
    expect(again.body.error.field).toBe('email');
    await asTamsin.delete(`/api/classes/${id}/students/${res.body.student.id}`).expect(403);
    await asRune.delete(`/api/classes/${id}/students/${res.body.student.id}`).expect(204);
    await asRune.delete(`/api/classes/${id}/students/${res.body.student.id}`).expect(404);
  });

  it('creates and invites a new student whose link sets a password once', async () => {
    const id = await runeClassId();
    const email = 'ines.larkspur@cindervalley.example';
    const needName = await asRune.post(`/api/classes/${id}/students`).send({ email }).expect(400);
    expect(needName.body.error.field).toBe('name');
    const res = await asRune.post(`/api/classes/${id}/students`).send({ email, name: 'Ines Larkspur' }).expect(201);
    expect(res.body).toMatchObject({ created: true, invited: true, student: { email, hasPassword: false } });
    const mail = await waitForMail(t.ctx, email);
    expect(mail.subject).toMatch(/invited/i);
    const token = linkToken(mail.body);
    const anon = await anonymousAgent(t.app);
    await anon.post('/api/auth/set-password').send({ token, password: 'larkspur-bench-1' }).expect(204);
    await anon.post('/api/auth/set-password').send({ token, password: 'larkspur-bench-2' }).expect(400);
    const ines = await signIn(t.app, email, 'larkspur-bench-1');
    const mine = (await ines.get('/api/classes').expect(200)).body.classes as ClassBody[];
    expect(mine.map((c) => c.id)).toEqual([id]);
  });

  it('refuses to enrol a staff account as a student', async () => {
    const id = await runeClassId();
    const res = await asRune.post(`/api/classes/${id}/students`).send({ email: tamsin!.email }).expect(409);
    expect(res.body.error.message).toBe(NOT_A_STUDENT);
  });

  it('resends an invitation only to a student who has not set a password', async () => {
    const id = await runeClassId();
    const email = 'ossian.brae@cindervalley.example';
    const created = await asRune.post(`/api/classes/${id}/students`).send({ email, name: 'Ossian Brae' }).expect(201);
    await asRune.post(`/api/classes/${id}/students/${created.body.student.id}/invite`).expect(202);
    const ada = (await asRune.get(`/api/classes/${id}`).expect(200)).body.students.find((s: { email: string }) => s.email === students[0]!.email);
    await asRune.post(`/api/classes/${id}/students/${ada.id}/invite`).expect(409);
  });
});
