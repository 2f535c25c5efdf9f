/**
 * Uploads: a roster CSV or a scenario JSON that is too large, malformed, of
 * the wrong type or hostile is refused with a 400 naming the field (and the
 * line, for a roster), and nothing is imported.
 *
 * Sources: OWASP ASVS 4.0 level 2, V12.1.1 (size limits on uploads), V12.2.1
 * (files of the expected type only), V5.1.3 and V5.1.4 (structured data
 * validated), V5.3.x / OWASP "CSV Injection" (cells that start with = + - @
 * are formulas to a spreadsheet).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { ROSTER_MAX_BYTES, ROSTER_MAX_ROWS } from '../../shared/api/classes.ts';
import { blankScenario } from '../../shared/scenario.ts';
import { SCENARIO_FILE_MAX_BYTES } from '../../server/library/routes.ts';
import { instructor, makeClass, type ClassFixture } from './live-fixtures.ts';
import { signIn, startTestApp, type Agent, type TestApp } from './support.ts';

let t: TestApp;
let teacher: Agent;
let fx: ClassFixture;

beforeAll(async () => {
  t = await startTestApp();
  teacher = await signIn(t.app, instructor.email);
  fx = await makeClass(t.ctx.db, { students: 1, name: 'Upload section' });
});
afterAll(async () => {
  await t?.close();
});

interface Counts {
  users: number;
  enrollments: number;
  imports: number;
  scenarios: number;
  versions: number;
  mail: number;
}

async function counts(): Promise<Counts> {
  const { rows } = await t.ctx.pool.query(`select
    (select count(*)::int from users) users, (select count(*)::int from enrollments) enrollments, (select count(*)::int from roster_imports) imports,
    (select count(*)::int from scenarios) scenarios, (select count(*)::int from scenario_versions) versions, (select count(*)::int from outbox) mail`);
  return rows[0] as Counts;
}

const roster = (path: 'roster' | 'roster/preview') => `/api/classes/${fx.classId}/${path}`;
const csv = (lines: string[]) => Buffer.from(`${lines.join('\n')}\n`);

function expectRefused(res: { status: number; body: { error?: { message?: unknown; field?: unknown } } }, field = 'file') {
  expect(res.status, JSON.stringify(res.body).slice(0, 300)).toBe(400);
  expect(typeof res.body.error?.message).toBe('string');
  expect(res.body.error?.field).toBe(field);
}

describe('roster uploads', () => {
  const cases: [string, () => { body: Buffer; name: string; type: string; field?: string }][] = [
    ['larger than the limit', () => ({ body: Buffer.alloc(ROSTER_MAX_BYTES + 1, 'a'), name: 'big.csv', type: 'text/csv' })],
    ['more rows than a roster holds', () => ({ body: csv(['name,email', ...Array.from({ length: ROSTER_MAX_ROWS + 1 }, (_, i) => `Student ${i},s${i}@upload.example`)]), name: 'many.csv', type: 'text/csv' })],
    ['one huge line', () => ({ body: csv(['name,email', `${'N'.repeat(200_000)},huge@upload.example`]), name: 'huge-line.csv', type: 'text/csv' })],
    ['binary, not text', () => ({ body: Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a, 0, 0, 0, 13, 0x49, 0x48, 0x44, 0x52, 0xff, 0xfe, 0]), name: 'photo.png', type: 'image/png' })],
    ['NUL bytes inside an otherwise good file', () => ({ body: Buffer.from('name,email\nNul\u0000Person,nul@upload.example\n'), name: 'nul.csv', type: 'text/csv' })],
    ['no header naming the columns', () => ({ body: csv(['Ada,ada@upload.example']), name: 'no-header.csv', type: 'text/csv' })],
    ['an unbalanced quote that swallows the file', () => ({ body: csv(['name,email', '"Quentin Open,quentin@upload.example', 'Rae Closed,rae@upload.example']), name: 'quote.csv', type: 'text/csv' })],
    ['a formula in a name (=CMD)', () => ({ body: csv(['name,email', '=CMD("calc")!A0,formula@upload.example', 'Plain Person,plain@upload.example']), name: 'formula.csv', type: 'text/csv' })],
    ['a formula in a name (@, +, -)', () => ({ body: csv(['name,email', '@SUM(1+1)*cmd,at@upload.example', '+1+1,plus@upload.example', '-2+3,minus@upload.example']), name: 'formula2.csv', type: 'text/csv' })],
    ['script text as an e-mail', () => ({ body: csv(['name,email', 'Script Person,<script>alert(1)</script>']), name: 'script.csv', type: 'text/csv' })],
    ['the file in another field', () => ({ body: csv(['name,email', 'Field Person,field@upload.example']), name: 'r.csv', type: 'text/csv', field: 'upload' })],
  ];

  it.each(cases)('refuses a roster that is %s, naming the field, and imports nothing', async (_what, make) => {
    const before = await counts();
    const f = make();
    for (const path of ['roster/preview', 'roster'] as const) {
      const res = await teacher.post(roster(path)).attach(f.field ?? 'file', f.body, { filename: f.name, contentType: f.type });
      if (path === 'roster/preview' && res.status === 200) {
        // The preview may list the lines; every one must then be marked bad.
        expect(res.body.errorCount, JSON.stringify(res.body).slice(0, 300)).toBeGreaterThan(0);
        expect(res.body.newCount + res.body.existingCount).toBeLessThan(res.body.rows.length);
        continue;
      }
      expectRefused(res, f.field ?? 'file');
    }
    expect(await counts()).toEqual(before);
  });

  it('refuses two files, and no file at all', async () => {
    const before = await counts();
    const good = csv(['name,email', 'Twin One,twin1@upload.example']);
    const two = await teacher.post(roster('roster')).attach('file', good, 'a.csv').attach('file', good, 'b.csv');
    expectRefused(two);
    const none = await teacher.post(roster('roster')).send({ rows: [{ name: 'Json Person', email: 'json@upload.example' }] });
    expectRefused(none);
    expect(await counts()).toEqual(before);
  });

  it('still imports a clean file (the refusals above are not a broken route)', async () => {
    const before = await counts();
    const res = await teacher.post(roster('roster')).attach('file', csv(['name,email', 'Clean Importer,clean.importer@upload.example']), 'clean.csv');
    expect(res.status).toBe(201);
    expect(res.body).toMatchObject({ created: 1, enrolled: 1 });
    const after = await counts();
    expect(after.users).toBe(before.users + 1);
    expect(after.imports).toBe(before.imports + 1);
  });
});

describe('scenario imports', () => {
  const good = () => blankScenario();
  let deep = '1';
  for (let i = 0; i < 50_000; i++) deep = `{"a":${deep}}`;
  const cases: [string, () => { body: Buffer; name: string; type: string; field?: string }][] = [
    ['larger than the limit', () => ({ body: Buffer.from(JSON.stringify({ ...good(), summary: 'x'.repeat(SCENARIO_FILE_MAX_BYTES) })), name: 'big.json', type: 'application/json' })],
    ['not JSON', () => ({ body: Buffer.from('{"format": "loadline.scenario", '), name: 'broken.json', type: 'application/json' })],
    ['binary', () => ({ body: Buffer.from([0xff, 0xd8, 0xff, 0xe0, 0, 0x10, 0x4a, 0x46, 0x49, 0x46, 0]), name: 'photo.jpg', type: 'image/jpeg' })],
    ['JSON, but a list', () => ({ body: Buffer.from(JSON.stringify([good()])), name: 'list.json', type: 'application/json' })],
    ['JSON, but a string', () => ({ body: Buffer.from(JSON.stringify('a scenario')), name: 'string.json', type: 'application/json' })],
    ['nested fifty thousand deep', () => ({ body: Buffer.from(deep), name: 'deep.json', type: 'application/json' })],
    ['a document with an unknown fault kind', () => ({ body: Buffer.from(JSON.stringify({ ...good(), faults: [{ id: 'f1', kind: 'rm -rf', severity01: 1, onsetS: 0 }] })), name: 'bad-fault.json', type: 'application/json' })],
    ['a document with a NUL character', () => ({ body: Buffer.from(JSON.stringify({ ...good(), title: 'Nul\u0000title' })), name: 'nul.json', type: 'application/json' })],
    ['the file in another field', () => ({ body: Buffer.from(JSON.stringify(good())), name: 's.json', type: 'application/json', field: 'document' })],
  ];

  it.each(cases)('refuses a scenario file that is %s, naming the field, and imports nothing', async (_what, make) => {
    const before = await counts();
    const f = make();
    const res = await teacher.post('/api/scenarios/import').attach(f.field ?? 'file', f.body, { filename: f.name, contentType: f.type });
    expect(res.status, JSON.stringify(res.body).slice(0, 300)).toBe(400);
    expect(typeof res.body.error?.message).toBe('string');
    const named = typeof res.body.error?.field === 'string' || (res.body.error?.issues ?? []).some((i: { path?: string }) => !!i.path);
    expect(named).toBe(true);
    expect(await counts()).toEqual(before);
  });

  it('refuses an oversized JSON body with 413, and a prototype-polluting one without polluting', async () => {
    const before = await counts();
    const big = await teacher.post('/api/scenarios/import').set('Content-Type', 'application/json').send(JSON.stringify({ ...good(), summary: 'x'.repeat(300_000) }));
    expect(big.status).toBe(413);
    expect(big.body.error.field).toBe('body');
    const polluted = await teacher
      .post('/api/scenarios/import')
      .set('Content-Type', 'application/json')
      .send(`{"__proto__": {"polluted": "yes"}, ${JSON.stringify(good()).slice(1)}`);
    expect(polluted.status).toBeLessThan(500);
    expect(({} as Record<string, unknown>).polluted).toBeUndefined();
    if (polluted.status !== 201) expect(await counts()).toEqual(before);
  });

  it('still imports a clean file', async () => {
    const before = await counts();
    const res = await teacher.post('/api/scenarios/import').attach('file', Buffer.from(JSON.stringify(good())), { filename: 'clean.json', contentType: 'application/json' });
    expect(res.status).toBe(201);
    expect((await counts()).scenarios).toBe(before.scenarios + 1);
  });
});
