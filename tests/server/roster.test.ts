import { eq, sql } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DEMO_PEOPLE } from '../../server/db/demo-people.ts';
import { outbox, rosterImports, users } from '../../server/db/schema.ts';
import { NOT_A_STUDENT } from '../../server/classes/queries.ts';
import { anonymousAgent, linkToken, signIn, startTestApp, waitForMail, type Agent, type TestApp } from './support.ts';

const [rune, tamsin] = DEMO_PEOPLE.filter((p) => p.role === 'instructor');
const students = DEMO_PEOPLE.filter((p) => p.role === 'student');

let t: TestApp;
let asRune: Agent;
let asTamsin: Agent;
let asStudent: Agent;
let classId: number;

beforeAll(async () => {
  t = await startTestApp();
  [asRune, asTamsin, asStudent] = await Promise.all([signIn(t.app, rune!.email), signIn(t.app, tamsin!.email), signIn(t.app, students[0]!.email)]);
  classId = ((await asRune.get('/api/classes').expect(200)).body.classes as { id: number }[])[0]!.id;
});
afterAll(async () => {
  await t.close();
});

const csv = (lines: string[]) => Buffer.from(`${lines.join('\n')}\n`);

async function userCount(): Promise<number> {
  const [row] = await t.ctx.db.select({ n: sql<number>`count(*)::int` }).from(users);
  return row!.n;
}

describe('roster preview', () => {
  it('reports every line: new, existing, already enrolled, and errors with their line numbers', async () => {
    const file = csv([
      'Name,E-mail',
      'Wren Halloway,wren.halloway@cindervalley.example',
      `${students[0]!.name},${students[0]!.email}`,
      `${students.at(-1)!.name},${students.at(-1)!.email}`,
      '',
      'No Address,',
      'Bad Address,not-an-email',
      'Wren Again,WREN.HALLOWAY@cindervalley.example',
      `Staff Member,${tamsin!.email}`,
      '"Quoted, Name",quoted.name@cindervalley.example',
    ]);
    const res = await asRune.post(`/api/classes/${classId}/roster/preview`).attach('file', file, 'section-a.csv').expect(200);
    const rows = res.body.rows as { line: number; status: string; message?: string; name: string }[];
    expect(rows.map((r) => [r.line, r.status])).toEqual([
      [2, 'new'],
      [3, 'enrolled'],
      [4, 'existing'],
      [6, 'error'],
      [7, 'error'],
      [8, 'error'],
      [9, 'error'],
      [10, 'new'],
    ]);
    expect(rows.find((r) => r.line === 6)!.message).toMatch(/e-mail is missing/);
    expect(rows.find((r) => r.line === 7)!.message).toMatch(/not a valid e-mail/);
    expect(rows.find((r) => r.line === 8)!.message).toMatch(/same e-mail as line 2/);
    // A staff account's e-mail is refused without saying what it is.
    expect(rows.find((r) => r.line === 9)!.message).toBe(NOT_A_STUDENT);
    expect(rows.find((r) => r.line === 10)!.name).toBe('Quoted, Name');
    expect(res.body).toMatchObject({ errorCount: 4, newCount: 2, existingCount: 1, alreadyEnrolledCount: 1, fileName: 'section-a.csv' });
  });

  it('counts file lines, not records, when a quoted field spans lines (and refuses the line break in the name, as every name does)', async () => {
    const file = csv(['name,email', '"Nell', 'Quarry",nell.quarry@cindervalley.example', 'Broken Line,broken@', 'Otto Vance,otto.vance@cindervalley.example']);
    const res = await asRune.post(`/api/classes/${classId}/roster/preview`).attach('file', file, 'multiline.csv').expect(200);
    const rows = res.body.rows as { line: number; status: string; message?: string }[];
    expect(rows.map((r) => [r.line, r.status])).toEqual([
      [2, 'error'],
      [4, 'error'],
      [5, 'new'],
    ]);
    expect(rows[0]!.message).toMatch(/line breaks/);
  });

  it('refuses a line with more values than the header names, such as a name with an unquoted comma', async () => {
    const file = csv(['name,email', 'Lark Embury,lark.embury@cindervalley.example', 'Embury, Lark,lark.embury2@cindervalley.example', 'Sable Orn,sable.orn@cindervalley.example,Tuesday group']);
    const res = await asRune.post(`/api/classes/${classId}/roster/preview`).attach('file', file, 'extra.csv').expect(200);
    const rows = res.body.rows as { line: number; status: string; message?: string }[];
    expect(rows.map((r) => [r.line, r.status])).toEqual([
      [2, 'new'],
      [3, 'error'],
      [4, 'error'],
    ]);
    expect(rows.find((r) => r.line === 4)!.message).toMatch(/3 values but the header names 2 columns/);
    // All or nothing: the import refuses the file and names the line.
    const before = await userCount();
    const commit = await asRune.post(`/api/classes/${classId}/roster`).attach('file', file, 'extra.csv');
    expect(commit.status).toBe(400);
    expect(JSON.stringify(commit.body)).toMatch(/[Ll]ine 3/);
    expect(await userCount()).toBe(before);
  });

  it('accepts first and last name columns', async () => {
    const res = await asRune
      .post(`/api/classes/${classId}/roster/preview`)
      .attach('file', csv(['first name,last name,email', 'Juno,Peverell,juno.peverell@cindervalley.example']), 'split.csv')
      .expect(200);
    expect(res.body.rows[0]).toMatchObject({ name: 'Juno Peverell', status: 'new' });
  });

  it('names line 1 when the header lacks the columns, and refuses an empty file or no file', async () => {
    const header = await asRune.post(`/api/classes/${classId}/roster/preview`).attach('file', csv(['who,where', 'a,b']), 'bad.csv').expect(400);
    expect(header.body.error.line).toBe(1);
    expect(header.body.error.message).toMatch(/^Line 1:/);
    const empty = await asRune.post(`/api/classes/${classId}/roster/preview`).attach('file', Buffer.from(''), 'empty.csv').expect(400);
    expect(empty.body.error.field).toBe('file');
    const none = await asRune.post(`/api/classes/${classId}/roster/preview`).field('x', '1').expect(400);
    expect(none.body.error.field).toBe('file');
  });

  it('is for the class’s instructors only', async () => {
    const file = csv(['name,email', 'A Person,a.person@cindervalley.example']);
    await asTamsin.post(`/api/classes/${classId}/roster/preview`).attach('file', file, 'x.csv').expect(403);
    await asStudent.post(`/api/classes/${classId}/roster/preview`).attach('file', file, 'x.csv').expect(403);
    await asTamsin.post(`/api/classes/${classId}/roster`).attach('file', file, 'x.csv').expect(403);
  });
});

describe('roster import', () => {
  it('imports nothing when one line is bad, and names the line', async () => {
    const before = await userCount();
    const [imports] = await t.ctx.db.select({ n: sql<number>`count(*)::int` }).from(rosterImports);
    const file = csv(['name,email', 'Good One,good.one@cindervalley.example', 'Bad One,bad-one-at-nowhere', 'Good Two,good.two@cindervalley.example']);
    const res = await asRune.post(`/api/classes/${classId}/roster`).attach('file', file, 'one-bad.csv').expect(400);
    expect(res.body.error.line).toBe(3);
    expect(res.body.error.message).toMatch(/^Line 3: .*nothing was imported/);
    expect(res.body.error.issues).toEqual([{ path: 'line 3', message: expect.stringContaining('not a valid e-mail') }]);
    expect(await userCount()).toBe(before);
    const [after] = await t.ctx.db.select({ n: sql<number>`count(*)::int` }).from(rosterImports);
    expect(after!.n).toBe(imports!.n);
    const mail = await t.ctx.db.select({ id: outbox.id }).from(outbox).where(eq(outbox.toAddress, 'good.one@cindervalley.example'));
    expect(mail).toEqual([]);
  });

  it('creates and enrols new students, enrols existing ones, and invites the new ones with links that work once', async () => {
    const existing = students.at(-1)!;
    const file = csv(['name,email', 'Lark Ambergate,lark.ambergate@cindervalley.example', 'Moss Quinlan,moss.quinlan@cindervalley.example', `${existing.name},${existing.email}`]);
    const res = await asRune.post(`/api/classes/${classId}/roster`).attach('file', file, 'new-students.csv').expect(201);
    expect(res.body).toMatchObject({ created: 2, enrolled: 3, invited: 2 });
    const detail = (await asRune.get(`/api/classes/${classId}`).expect(200)).body as { students: { email: string; hasPassword: boolean }[] };
    for (const e of ['lark.ambergate@cindervalley.example', 'moss.quinlan@cindervalley.example', existing.email]) expect(detail.students.some((s) => s.email === e)).toBe(true);
    const [record] = await t.ctx.db.select({ fileName: rosterImports.fileName, createdCount: rosterImports.createdCount }).from(rosterImports).where(eq(rosterImports.id, res.body.importId));
    expect(record).toEqual({ fileName: 'new-students.csv', createdCount: 2 });

    const mail = await waitForMail(t.ctx, 'lark.ambergate@cindervalley.example');
    expect(mail.subject).toMatch(/invited/i);
    expect(mail.body).toMatch(/\/set-password\?token=/);
    const token = linkToken(mail.body);
    const anon = await anonymousAgent(t.app);
    await anon.post('/api/auth/set-password').send({ token, password: 'ambergate-bench-1' }).expect(204);
    const reuse = await anon.post('/api/auth/set-password').send({ token, password: 'ambergate-bench-2' }).expect(400);
    expect(reuse.body.error.field).toBe('token');
    const lark = await signIn(t.app, 'lark.ambergate@cindervalley.example', 'ambergate-bench-1');
    const classes = (await lark.get('/api/classes').expect(200)).body.classes as { id: number }[];
    expect(classes.map((c) => c.id)).toEqual([classId]);
    // The existing student got no invitation: a notice that they were added to the class, with no link that sets a password.
    const notices = await t.ctx.db.select({ subject: outbox.subject, body: outbox.body }).from(outbox).where(eq(outbox.toAddress, existing.email));
    expect(notices).toHaveLength(1);
    expect(notices[0]!.subject).toMatch(/You were added to /);
    expect(notices[0]!.body).not.toMatch(/token=/);
  });

  it('sends a password reset whose link works once for a rostered student', async () => {
    const anon = await anonymousAgent(t.app);
    await anon.post('/api/auth/password-reset').send({ email: 'moss.quinlan@cindervalley.example' }).expect(202);
    const deadline = Date.now() + 5000;
    let body = '';
    while (Date.now() < deadline) {
      const rows = await t.ctx.db.select({ subject: outbox.subject, body: outbox.body }).from(outbox).where(eq(outbox.toAddress, 'moss.quinlan@cindervalley.example'));
      const reset = rows.find((r) => /reset/i.test(r.subject));
      if (reset) {
        body = reset.body;
        break;
      }
      await new Promise((r) => setTimeout(r, 50));
    }
    const token = linkToken(body);
    await anon.post('/api/auth/set-password').send({ token, password: 'quinlan-bench-1' }).expect(204);
    await anon.post('/api/auth/set-password').send({ token, password: 'quinlan-bench-2' }).expect(400);
    await signIn(t.app, 'moss.quinlan@cindervalley.example', 'quinlan-bench-1');
  });
});
