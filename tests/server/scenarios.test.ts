import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { eq } from 'drizzle-orm';
import { DEMO_PEOPLE } from '../../server/db/demo-people.ts';
import { scenarios, scenarioVersions } from '../../server/db/schema.ts';
import { readLibrary } from '../../server/demo/seed-library.ts';
import { blankScenario, type ScenarioDefinition } from '../../shared/scenario.ts';
import { anonymousAgent, signIn, startTestApp, type Agent, type TestApp } from './support.ts';

const admin = DEMO_PEOPLE.find((p) => p.role === 'admin')!;
const [rune, tamsin] = DEMO_PEOPLE.filter((p) => p.role === 'instructor');
const student = DEMO_PEOPLE.find((p) => p.role === 'student')!;

let t: TestApp;
let asRune: Agent;
let asTamsin: Agent;
let asAdmin: Agent;
let asStudent: Agent;

beforeAll(async () => {
  t = await startTestApp();
  [asRune, asTamsin, asAdmin, asStudent] = await Promise.all([signIn(t.app, rune!.email), signIn(t.app, tamsin!.email), signIn(t.app, admin.email), signIn(t.app, student.email)]);
});
afterAll(async () => {
  await t.close();
});

function doc(title = 'Open diode on a test sedan'): ScenarioDefinition {
  const d = blankScenario();
  d.title = title;
  d.faults = [{ id: 'open-diode', kind: 'diode-open', severity01: 1, onsetS: 0, intermittent: null }];
  d.diagnosisChoices = ['diode-open', 'diode-shorted', 'stator-phase-open', 'none'];
  d.testsExpected = ['output', 'ripple'];
  return d;
}

async function create(agent: Agent, visibility: 'private' | 'shared' = 'private', title?: string) {
  const res = await agent.post('/api/scenarios').send({ definition: doc(title), visibility }).expect(201);
  return res.body as { id: number; latestVersionId: number; versions: { id: number; version: number }[] };
}

describe('the seeded library', () => {
  it('holds every file of scenarios/ with its version 1 published', async () => {
    const files = readLibrary();
    const rows = await t.ctx.db.select({ slug: scenarios.slug, published: scenarios.publishedVersionId }).from(scenarios);
    for (const f of files) expect(rows.find((r) => r.slug === f.slug), f.file).toBeTruthy();
    expect(rows.filter((r) => r.published !== null).length).toBeGreaterThanOrEqual(14);
  });

  it('lists shared scenarios to any instructor with search facets', async () => {
    const res = await asTamsin.get('/api/scenarios').expect(200);
    const list = res.body.scenarios as { title: string; faultKinds: string[]; testsExpected: string[]; difficulty: string; canEdit: boolean; owner: { name: string } }[];
    expect(list.length).toBeGreaterThanOrEqual(14);
    expect(list.some((s) => s.faultKinds.length === 0)).toBe(true);
    const runeOwned = list.find((s) => s.owner?.name === rune!.name)!;
    expect(runeOwned.canEdit).toBe(false);
  });

  it('filters by fault, test, difficulty and text', async () => {
    const byFault = (await asRune.get('/api/scenarios').query({ fault: 'belt-slip' }).expect(200)).body.scenarios as { faultKinds: string[] }[];
    expect(byFault.length).toBeGreaterThan(0);
    expect(byFault.every((s) => s.faultKinds.includes('belt-slip'))).toBe(true);
    const byTest = (await asRune.get('/api/scenarios').query({ test: 'key-off-draw' }).expect(200)).body.scenarios as { testsExpected: string[] }[];
    expect(byTest.length).toBeGreaterThan(0);
    expect(byTest.every((s) => s.testsExpected.includes('key-off-draw'))).toBe(true);
    const intro = (await asRune.get('/api/scenarios').query({ difficulty: 'intro' }).expect(200)).body.scenarios as { difficulty: string }[];
    expect(intro.length).toBeGreaterThan(0);
    expect(intro.every((s) => s.difficulty === 'intro')).toBe(true);
    const text = (await asRune.get('/api/scenarios').query({ q: 'harlan ridge' }).expect(200)).body.scenarios as { vehicleName: string }[];
    expect(text.map((s) => s.vehicleName)).toEqual(['Harlan Ridge compact pickup']);
    const bad = await asRune.get('/api/scenarios').query({ fault: 'gremlins' }).expect(400);
    expect(bad.body.error.field).toBe('fault');
  });
});

describe('roles', () => {
  it('refuses students and anonymous callers on instructor routes', async () => {
    const anon = await anonymousAgent(t.app);
    await anon.get('/api/scenarios').expect(401);
    await asStudent.get('/api/scenarios').expect(403);
    const [first] = (await asRune.get('/api/scenarios').expect(200)).body.scenarios as { id: number }[];
    await asStudent.get(`/api/scenarios/${first!.id}`).expect(403);
    await asStudent.get(`/api/scenarios/${first!.id}/export`).expect(403);
    await asStudent.post('/api/scenarios').send({ definition: doc() }).expect(403);
    await asStudent.post(`/api/scenarios/${first!.id}/duplicate`).send({}).expect(403);
  });

  it('gives students a practice list of published shared scenarios without faults', async () => {
    const res = await asStudent.get('/api/scenarios/practice').expect(200);
    const list = res.body.scenarios as Record<string, unknown>[];
    expect(list.length).toBeGreaterThanOrEqual(14);
    const raw = JSON.stringify(res.body);
    for (const word of ['faults', 'faultKinds', 'testsExpected', 'severity01', 'diode-open', 'params', 'objectives']) expect(raw).not.toContain(word);
    expect(Object.keys(list[0]!).sort()).toEqual(['difficulty', 'id', 'summary', 'title', 'vehicleKind', 'vehicleName']);
    // The private, unpublished demo scenario is not offered.
    expect(list.some((s) => String(s.title).includes('rough roads'))).toBe(false);
  });
});

describe('private and shared', () => {
  it('hides another instructor’s private scenario and refuses to edit a shared one they do not own', async () => {
    const mine = await create(asRune, 'private', 'Rune private draft');
    await asTamsin.get(`/api/scenarios/${mine.id}`).expect(404);
    await asTamsin.put(`/api/scenarios/${mine.id}`).send({ definition: doc('Hijack') }).expect(404);
    await asTamsin.get(`/api/scenarios/${mine.id}/export`).expect(404);
    await asTamsin.post(`/api/scenarios/${mine.id}/duplicate`).send({}).expect(404);
    const listed = (await asTamsin.get('/api/scenarios').expect(200)).body.scenarios as { id: number }[];
    expect(listed.some((s) => s.id === mine.id)).toBe(false);
    // The admin sees and may change everything.
    await asAdmin.get(`/api/scenarios/${mine.id}`).expect(200);

    const shared = await create(asRune, 'shared', 'Rune shared');
    await asTamsin.get(`/api/scenarios/${shared.id}`).expect(200);
    const refused = await asTamsin.put(`/api/scenarios/${shared.id}`).send({ definition: doc('Edited by another') }).expect(403);
    expect(refused.body.error.message).toMatch(/duplicate/i);
    await asTamsin.post(`/api/scenarios/${shared.id}/publish`).send({ versionId: shared.latestVersionId }).expect(403);
    await asTamsin.patch(`/api/scenarios/${shared.id}`).send({ visibility: 'private' }).expect(403);
  });
});

describe('versions', () => {
  it('makes a new immutable version on each edit, publishes one, and restores an old one as a new version', async () => {
    const s = await create(asRune, 'private', 'Versioned scenario');
    expect(s.versions.map((v) => v.version)).toEqual([1]);
    const v1 = s.versions[0]!.id;
    const edited = doc('Versioned scenario, harder');
    edited.faults[0]!.severity01 = 0.5;
    const up = await asRune.put(`/api/scenarios/${s.id}`).send({ definition: edited, note: 'Harder', baseVersion: 1 }).expect(200);
    expect(up.body.latestVersion).toBe(2);
    expect(up.body.definition.title).toBe('Versioned scenario, harder');
    // Version 1 is unchanged.
    const [stored] = await t.ctx.db.select({ definition: scenarioVersions.definition }).from(scenarioVersions).where(eq(scenarioVersions.id, v1));
    expect((stored!.definition as ScenarioDefinition).title).toBe('Versioned scenario');
    // A stale base version is refused.
    const stale = await asRune.put(`/api/scenarios/${s.id}`).send({ definition: edited, baseVersion: 1 }).expect(409);
    expect(stale.body.error.field).toBe('baseVersion');

    const pub = await asRune.post(`/api/scenarios/${s.id}/publish`).send({ versionId: v1 }).expect(200);
    expect(pub.body.publishedVersionId).toBe(v1);
    expect(pub.body.versions.find((v: { id: number }) => v.id === v1).published).toBe(true);

    const restored = await asRune.post(`/api/scenarios/${s.id}/restore`).send({ versionId: v1 }).expect(200);
    expect(restored.body.latestVersion).toBe(3);
    expect(restored.body.definition.title).toBe('Versioned scenario');
    expect(restored.body.versions[0].note).toBe('Restored from version 1');

    const one = await asRune.get(`/api/scenarios/${s.id}/versions/${v1}`).expect(200);
    expect(one.body.definition.title).toBe('Versioned scenario');
    // A version of another scenario is not reachable through this one.
    const other = await create(asRune, 'private', 'Another');
    await asRune.get(`/api/scenarios/${s.id}/versions/${other.latestVersionId}`).expect(404);
    await asRune.post(`/api/scenarios/${s.id}/publish`).send({ versionId: other.latestVersionId }).expect(404);
  });

  it('answers 400 naming each bad path of an invalid definition and stores nothing', async () => {
    const s = await create(asRune, 'private', 'Will stay at version 1');
    const bad = doc() as unknown as { vehicle: { params: { battery: { cca: number }; alternator: { ratedCurrentA: string } } } };
    bad.vehicle.params.battery.cca = 99999;
    bad.vehicle.params.alternator.ratedCurrentA = 'lots';
    const res = await asRune.put(`/api/scenarios/${s.id}`).send({ definition: bad }).expect(400);
    const paths = (res.body.error.issues as { path: string }[]).map((i) => i.path);
    expect(paths).toEqual(expect.arrayContaining(['definition.vehicle.params.battery.cca', 'definition.vehicle.params.alternator.ratedCurrentA']));
    const after = await asRune.get(`/api/scenarios/${s.id}`).expect(200);
    expect(after.body.latestVersion).toBe(1);
    const missing = await asRune.post('/api/scenarios').send({ visibility: 'shared' }).expect(400);
    expect(missing.body.error.field).toMatch(/^definition/);
  });
});

describe('archive', () => {
  it('hides an archived scenario from the library and from practice until it is brought back', async () => {
    const s = await create(asRune, 'shared', 'Archive me');
    await asRune.post(`/api/scenarios/${s.id}/publish`).send({ versionId: s.latestVersionId }).expect(200);
    const practiceIds = async () => ((await asStudent.get('/api/scenarios/practice').expect(200)).body.scenarios as { id: number }[]).map((x) => x.id);
    expect(await practiceIds()).toContain(s.id);
    await asTamsin.patch(`/api/scenarios/${s.id}`).send({ archived: true }).expect(403);
    const archived = await asRune.patch(`/api/scenarios/${s.id}`).send({ archived: true }).expect(200);
    expect(archived.body.archived).toBe(true);
    const listed = (await asRune.get('/api/scenarios').expect(200)).body.scenarios as { id: number }[];
    expect(listed.some((x) => x.id === s.id)).toBe(false);
    const withArchived = (await asRune.get('/api/scenarios').query({ includeArchived: 'true' }).expect(200)).body.scenarios as { id: number; archived: boolean }[];
    expect(withArchived.find((x) => x.id === s.id)?.archived).toBe(true);
    expect(await practiceIds()).not.toContain(s.id);
    await asRune.patch(`/api/scenarios/${s.id}`).send({ archived: false }).expect(200);
    expect(await practiceIds()).toContain(s.id);
    const bad = await asRune.patch(`/api/scenarios/${s.id}`).send({ visibility: 'public' }).expect(400);
    expect(bad.body.error.field).toBe('visibility');
  });
});

describe('duplicate, import and export', () => {
  it('duplicates a shared scenario into a private copy the caller owns', async () => {
    const shared = (await asTamsin.get('/api/scenarios').query({ q: 'Harlan Ridge' }).expect(200)).body.scenarios[0] as { id: number; title: string };
    const copy = await asTamsin.post(`/api/scenarios/${shared.id}/duplicate`).send({}).expect(201);
    expect(copy.body.visibility).toBe('private');
    expect(copy.body.owner.name).toBe(tamsin!.name);
    expect(copy.body.canEdit).toBe(true);
    expect(copy.body.definition.title).toBe(`Copy of ${shared.title}`);
    expect(copy.body.definition.faults[0].kind).toBe('belt-slip');
  });

  it('exports a version as a JSON file that imports back the same', async () => {
    const s = await create(asRune, 'private', 'Round trip');
    const exp = await asRune.get(`/api/scenarios/${s.id}/export`).expect(200);
    expect(exp.headers['content-disposition']).toMatch(/attachment; filename=".*-v1\.loadline\.json"/);
    const text = exp.text;
    const parsed = JSON.parse(text) as ScenarioDefinition;
    expect(parsed.format).toBe('loadline.scenario');
    const imp = await asTamsin.post('/api/scenarios/import').attach('file', Buffer.from(text), 'round-trip.loadline.json').expect(201);
    expect(imp.body.definition).toEqual(parsed);
    expect(imp.body.owner.name).toBe(tamsin!.name);
    expect(imp.body.versions[0].note).toBe('Imported from round-trip.loadline.json');
    await asRune.get(`/api/scenarios/${s.id}/export`).query({ version: 7 }).expect(404);
  });

  it('imports a JSON body and fills the defaults of a partial file', async () => {
    const partial = {
      format: 'loadline.scenario',
      formatVersion: 1,
      title: 'Partial import',
      summary: 'The battery light comes on at idle with the lamps on.',
      vehicle: { name: 'Invented test van', kind: 'van', engineDescription: '3.0 L six', params: { alternator: { ratedCurrentA: 120 } } },
      faults: [{ id: 'slip', kind: 'belt-slip', severity01: 0.4 }],
    };
    const res = await asRune.post('/api/scenarios/import').query({ visibility: 'shared' }).send(partial).expect(201);
    expect(res.body.visibility).toBe('shared');
    expect(res.body.definition.vehicle.params.alternator.ratedCurrentA).toBe(120);
    expect(res.body.definition.passRules.output).toEqual({ mode: 'percent-of-rating', percent: 90 });
  });

  it('imports nothing from a file with bad fields and names every bad path', async () => {
    const before = (await t.ctx.db.select({ id: scenarios.id }).from(scenarios)).length;
    const bad = doc('Bad import') as unknown as Record<string, unknown> & { faults: Record<string, unknown>[]; vehicle: { params: { battery: Record<string, unknown> } } };
    bad.faults[0]!.severity01 = 3;
    bad.vehicle.params.battery.cca = -5;
    bad.difficulty = 'legendary';
    const res = await asRune.post('/api/scenarios/import').attach('file', Buffer.from(JSON.stringify(bad)), 'bad.json').expect(400);
    const paths = (res.body.error.issues as { path: string }[]).map((i) => i.path);
    expect(paths).toEqual(expect.arrayContaining(['faults.0.severity01', 'vehicle.params.battery.cca', 'difficulty']));
    expect(res.body.error.message).toMatch(/and 2 more/);
    // The message names the first field in words, not as the file's dotted path.
    expect(res.body.error.message).not.toMatch(/params|severity01|\.0\./);
    expect(res.body.error.message).toMatch(/^(Fault 1 › Severity|Vehicle › Battery › Cold-cranking amps|Difficulty): /);
    const notJson = await asRune.post('/api/scenarios/import').attach('file', Buffer.from('{ nope'), 'broken.json').expect(400);
    expect(notJson.body.error.field).toBe('file');
    const none = await asRune.post('/api/scenarios/import').field('x', '1').expect(400);
    expect(none.body.error.field).toBe('file');
    const after = (await t.ctx.db.select({ id: scenarios.id }).from(scenarios)).length;
    expect(after).toBe(before);
  });

  it('refuses a file larger than the limit, naming the field', async () => {
    const res = await asRune.post('/api/scenarios/import').attach('file', Buffer.alloc(600 * 1024, 32), 'huge.json').expect(400);
    expect(res.body.error.field).toBe('file');
  });
});
