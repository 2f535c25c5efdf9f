/**
 * Bad input that used to answer 500, name the wrong field or be read two
 * ways: malformed multipart uploads (no boundary, a truncated body), NUL
 * characters and integer overflow in path and query parameters,
 * non-canonical ids (`1e1` opening attempt 10, `0x10` read as 16), and names
 * with control characters, direction overrides or a leading formula
 * character, refused the same way wherever a name is typed: user creation,
 * single enrolment, roster import, class names, scenario and assignment
 * titles and stored file names.
 *
 * Sources: OWASP ASVS 4.0 V5.1.3 and V5.1.4 (input validated against an
 * allow list, structured data checked), V12.1.1 (uploads), V7.4.1 (no
 * internals in errors); OWASP "CSV Injection"; Unicode Technical Report #36
 * and CVE-2021-42574 "Trojan Source" (bidirectional control characters);
 * from memory.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DEMO_PEOPLE } from '../../server/db/demo-people.ts';
import { blankScenario } from '../../shared/scenario.ts';
import { instructor, makeAttempt, makeClass, students, type ClassFixture } from './live-fixtures.ts';
import { signIn, startTestApp, type Agent, type TestApp } from './support.ts';

let t: TestApp;
let fx: ClassFixture;
let teacher: Agent;
let adminAgent: Agent;
let studentAgent: Agent;
let attemptId: number;

beforeAll(async () => {
  t = await startTestApp();
  fx = await makeClass(t.ctx.db, { students: 1, name: 'Input section' });
  attemptId = await makeAttempt(t.ctx.db, fx, fx.studentIds[0]!);
  teacher = await signIn(t.app, instructor.email);
  adminAgent = await signIn(t.app, DEMO_PEOPLE.find((p) => p.role === 'admin')!.email);
  studentAgent = await signIn(t.app, students[0]!.email);
});
afterAll(async () => {
  await t?.close();
});

/** Rows in the tables an upload or a create writes. */
async function written(): Promise<string> {
  const { rows } = await t.ctx.pool.query(`select (select count(*) from users) u, (select count(*) from enrollments) e, (select count(*) from roster_imports) r,
    (select count(*) from scenarios) s, (select count(*) from scenario_versions) v, (select count(*) from classes) c, (select count(*) from assignments) a`);
  return JSON.stringify(rows[0]);
}

function expect400(res: { status: number; body: { error?: { field?: unknown; message?: unknown } } }, field: string, what: string) {
  expect(res.status, `${what}: ${JSON.stringify(res.body).slice(0, 300)}`).toBe(400);
  expect(res.body.error?.field, what).toBe(field);
  expect(typeof res.body.error?.message).toBe('string');
}

const BOUNDARY = 'loadline-test-boundary';
const part = (disposition: string, content: string) => `--${BOUNDARY}\r\nContent-Disposition: form-data; ${disposition}\r\nContent-Type: text/csv\r\n\r\n${content}\r\n`;

describe('malformed multipart uploads', () => {
  const uploads = () => [`/api/classes/${fx.classId}/roster/preview`, `/api/classes/${fx.classId}/roster`, '/api/scenarios/import'];

  it('answers a form with no boundary with a 400 naming the file field, and writes nothing', async () => {
    for (const path of uploads()) {
      const before = await written();
      const res = await teacher.post(path).set('Content-Type', 'multipart/form-data').send('name,email\nNo Boundary,none@input.example\n');
      expect400(res, 'file', `${path} without a boundary`);
      expect(await written()).toBe(before);
    }
  });

  it('answers a truncated body, and a part with a broken header, with a 400 naming the file field, and writes nothing', async () => {
    const truncated = part('name="file"; filename="roster.csv"', 'name,email\nCut Short,cut@input.example').replace(/\r\n$/, '');
    const brokenHeader = `--${BOUNDARY}\r\nContent-Disposition form-data name="file"\r\n\r\nx\r\n--${BOUNDARY}--\r\n`;
    for (const path of uploads()) {
      for (const [what, body] of [
        ['truncated', truncated],
        ['broken part header', brokenHeader],
      ] as const) {
        const before = await written();
        const res = await teacher.post(path).set('Content-Type', `multipart/form-data; boundary=${BOUNDARY}`).send(body);
        // A part with a broken header is no file at all: that too is a 400 naming the field.
        expect400(res, 'file', `${path}, ${what}`);
        expect(await written()).toBe(before);
      }
    }
  });

  it('still imports a well-formed roster (the refusals above are not a broken route)', async () => {
    const body = `${part('name="file"; filename="section-b.csv"', 'name,email\nWell Formed,well.formed@input.example')}--${BOUNDARY}--\r\n`;
    const res = await teacher.post(`/api/classes/${fx.classId}/roster`).set('Content-Type', `multipart/form-data; boundary=${BOUNDARY}`).send(body);
    expect(res.status, res.text).toBe(201);
  });
});

describe('path and query parameters', () => {
  it('refuses ids written any way but plain digits, naming the parameter, instead of opening another attempt', async () => {
    expect((await studentAgent.get(`/api/attempts/${attemptId}`)).status).toBe(200);
    for (const id of ['1e1', '0x10', `0${attemptId}`, `+${attemptId}`, `%20${attemptId}`, `${attemptId}.0`, '1_0', encodeURIComponent('١٠')]) {
      expect400(await studentAgent.get(`/api/attempts/${id}`), 'id', `/api/attempts/${id}`);
    }
    expect400(await teacher.get(`/api/scenarios/1/versions/0x1`), 'versionId', 'versionId 0x1');
    expect400(await teacher.delete(`/api/classes/${fx.classId}/students/0${fx.studentIds[0]}`), 'userId', 'a student id with a leading zero');
    expect400(await teacher.get(`/api/assignments?classId=0x${fx.classId.toString(16)}`), 'classId', 'classId in hex');
    expect400(await teacher.get(`/api/assignments?classId=${fx.classId}&classId=${fx.classId}`), 'classId', 'classId twice');
  });

  it('refuses integer overflow in a path or query, naming the parameter, not "body"', async () => {
    for (const id of ['2147483648', '9999999999', '99999999999999999999999']) {
      expect400(await studentAgent.get(`/api/attempts/${id}`), 'id', `attempt ${id}`);
      expect400(await teacher.get(`/api/assignments?classId=${id}`), 'classId', `classId ${id}`);
      expect400(await teacher.get(`/api/scenarios/1/export?version=${id}`), 'version', `version ${id}`);
      expect400(await adminAgent.patch(`/api/users/${id}`).send({ name: 'Overflow Person' }), 'id', `user ${id}`);
    }
    // The largest id PostgreSQL stores is an id like any other: not found, not refused.
    expect((await studentAgent.get('/api/attempts/2147483647')).status).toBe(404);
  });

  it('refuses NUL in a path or query, naming the parameter, not "body"', async () => {
    expect400(await studentAgent.get('/api/attempts/%00'), 'id', 'NUL id');
    expect400(await adminAgent.get('/api/users?q=ada%00'), 'q', 'NUL in a search');
    expect400(await teacher.get('/api/scenarios?q=%00'), 'q', 'NUL in a library search');
    expect400(await adminAgent.get('/api/users?role=student&zzz=%00'), 'zzz', 'NUL in a parameter the route does not use');
  });
});

describe('one rule for every name', () => {
  const hostileNames: [string, string][] = [
    ['a formula', '=HYPERLINK("http://evil.example","Grades")'],
    ['a plus formula', '+SUM(1,2)'],
    ['a minus formula', '-2+3'],
    ['an at formula', '@cmd'],
    ['a line break', 'Ada\r\nBcc: everyone@evil.example'],
    ['a tab', 'Ada\tBrightwater'],
    ['a right-to-left override', 'Ada \u202Egnp.exe'],
    ['a direction isolate', '\u2067Ada\u2069'],
    ['a line separator', 'Ada\u2028Brightwater'],
  ];

  it('refuses them in user creation, single enrolment, class names and assignment titles, naming the field and writing nothing', async () => {
    let n = 0;
    for (const [what, name] of hostileNames) {
      n++;
      const before = await written();
      expect400(await adminAgent.post('/api/users').send({ email: `hostile.${n}@input.example`, name, role: 'student' }), 'name', `new user with ${what}`);
      expect400(await adminAgent.patch(`/api/users/${fx.studentIds[0]}`).send({ name }), 'name', `renamed user with ${what}`);
      expect400(await teacher.post(`/api/classes/${fx.classId}/students`).send({ email: `hostile.enrol.${n}@input.example`, name }), 'name', `enrolment with ${what}`);
      expect400(await teacher.post('/api/classes').send({ name }), 'name', `class named with ${what}`);
      const assignment = { classId: fx.classId, scenarioId: 1, title: name, opensAt: new Date().toISOString(), dueAt: new Date(Date.now() + 86_400_000).toISOString(), attemptsAllowed: 1 };
      expect400(await teacher.post('/api/assignments').send(assignment), 'title', `assignment titled with ${what}`);
      expect(await written()).toBe(before);
    }
  });

  it('refuses them in a roster line, with the same words', async () => {
    // Every name a CSV cell can hold unescaped, each quoted (some hold commas).
    const lines = hostileNames.filter(([, name]) => !/[\r\n"]/.test(name)).map(([, name], i) => `"${name}",roster.hostile.${i}@input.example`);
    const res = await teacher
      .post(`/api/classes/${fx.classId}/roster/preview`)
      .attach('file', Buffer.from(`name,email\n${lines.join('\n')}\n`), { filename: 'hostile.csv', contentType: 'text/csv' })
      .expect(200);
    const rows = res.body.rows as { status: string; message?: string }[];
    expect(rows.map((r) => r.status)).toEqual(lines.map(() => 'error'));
    const single = await adminAgent.post('/api/users').send({ email: 'same.words@input.example', name: '=1+1', role: 'student' });
    expect(rows[0]!.message).toBe(single.body.error.message.replace(/^name: /, ''));
  });

  it('refuses them in scenario titles, whether created, imported or duplicated', async () => {
    // A formula character counts at the start; the other characters anywhere.
    const inTitle = (name: string, rest: string) => (/^[=+\-@]/.test(name) ? `${name} ${rest}` : `${rest} ${name}`);
    for (const [what, name] of hostileNames) {
      const before = await written();
      const doc = { ...blankScenario(), title: inTitle(name, 'dim lamps at idle') };
      expect400(await teacher.post('/api/scenarios').send({ definition: doc }), 'definition.title', `created with ${what}`);
      expect400(await teacher.post('/api/scenarios/import').send(doc), 'title', `imported with ${what}`);
      expect400(await teacher.post('/api/scenarios/1/duplicate').send({ title: inTitle(name, 'copy') }), 'title', `duplicated with ${what}`);
      expect(await written()).toBe(before);
    }
  });

  it('refuses an uploaded file whose name breaks the rule, naming the file field, and stores good names as they were sent', async () => {
    const upload = (fileNameParam: string, path: string, content: string) =>
      teacher
        .post(path)
        .set('Content-Type', `multipart/form-data; boundary=${BOUNDARY}`)
        .send(`${part(`name="file"; ${fileNameParam}`, content)}--${BOUNDARY}--\r\n`);
    const csvBody = 'name,email\nFile Named,file.named@input.example';
    const scenarioBody = JSON.stringify({ ...blankScenario(), title: 'Named file import' });
    // A CR/LF can only come percent-encoded (RFC 2231/5987); a browser escapes it the same way.
    for (const [what, param] of [
      ['CR/LF', "filename*=utf-8''roster%0D%0ABcc.csv"],
      ['a formula', 'filename="=HYPERLINK(1).csv"'],
      ['a right-to-left override', "filename*=utf-8''roster%E2%80%AEvsc.csv"],
    ] as const) {
      const before = await written();
      expect400(await upload(param, `/api/classes/${fx.classId}/roster/preview`, csvBody), 'file', `roster preview, file name with ${what}`);
      expect400(await upload(param, `/api/classes/${fx.classId}/roster`, csvBody), 'file', `roster import, file name with ${what}`);
      expect400(await upload(param, '/api/scenarios/import', scenarioBody), 'file', `scenario import, file name with ${what}`);
      expect(await written()).toBe(before);
    }
    const good = await upload("filename*=utf-8''Sektion%20%C3%A9t%C3%A9.csv", `/api/classes/${fx.classId}/roster/preview`, csvBody);
    expect(good.status, good.text).toBe(200);
    expect(good.body.fileName).toBe('Sektion été.csv');
  });
});
