/**
 * Fuzzing the library and class routes (scenarios, classes, assignments) with
 * valid-looking and hostile bodies and queries. Checks and sources: fuzz-kit.ts.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { blankScenario } from '../../shared/scenario.ts';
import { checker, expectRanThePlan, FUZZ_TIMEOUT_MS, mutations, queryMutations, runTarget, type Checker, type Target } from './fuzz-kit.ts';
import { instructor, makeClass, type ClassFixture } from './live-fixtures.ts';
import { signIn, startTestApp, type Agent, type TestApp } from './support.ts';

let t: TestApp;
let teacher: Agent;
let ck: Checker;
let fx: ClassFixture;
let scenarioId: number;
let versionId: number;
let sharedScenarioId: number;
let n = 0;

beforeAll(async () => {
  t = await startTestApp();
  teacher = await signIn(t.app, instructor.email);
  fx = await makeClass(t.ctx.db, { students: 1, name: 'Fuzz section' });
  const created = await teacher.post('/api/scenarios').send({ definition: blankScenario(), visibility: 'private' }).expect(201);
  scenarioId = created.body.id as number;
  versionId = created.body.latestVersionId as number;
  const asg = await teacher.get(`/api/assignments/${fx.assignmentId}`).expect(200);
  sharedScenarioId = asg.body.assignment.scenarioId as number;
  ck = await checker(t.ctx.pool);
});
afterAll(async () => {
  await t?.close();
});

const definitionFields = () => blankScenario() as unknown as Record<string, unknown>;

const targets = (): Target[] => [
  { name: 'GET /api/scenarios', agent: () => teacher, method: 'get', path: () => '/api/scenarios', query: queryMutations(['q', 'fault', 'test', 'difficulty', 'owner', 'includeArchived']), runs: 300 },
  { name: 'POST /api/scenarios', agent: () => teacher, method: 'post', path: () => '/api/scenarios', body: mutations(() => ({ definition: blankScenario(), visibility: 'private', note: 'Fuzzed' })), runs: 250 },
  // The document's own fields, through the import route that takes the document as the body.
  { name: 'POST /api/scenarios/import (document fields)', agent: () => teacher, method: 'post', path: () => '/api/scenarios/import', body: mutations(definitionFields), runs: 400 },
  { name: 'PUT /api/scenarios/:id', agent: () => teacher, method: 'put', path: () => `/api/scenarios/${scenarioId}`, body: mutations(() => ({ definition: blankScenario(), note: 'Fuzzed edit', baseVersion: 1 })), runs: 200 },
  { name: 'PATCH /api/scenarios/:id', agent: () => teacher, method: 'patch', path: () => `/api/scenarios/${scenarioId}`, body: mutations(() => ({ visibility: 'private', archived: false })), runs: 200 },
  { name: 'POST /api/scenarios/:id/publish', agent: () => teacher, method: 'post', path: () => `/api/scenarios/${scenarioId}/publish`, body: mutations(() => ({ versionId })), runs: 150 },
  { name: 'POST /api/scenarios/:id/restore', agent: () => teacher, method: 'post', path: () => `/api/scenarios/${scenarioId}/restore`, body: mutations(() => ({ versionId })), runs: 150 },
  { name: 'POST /api/scenarios/:id/duplicate', agent: () => teacher, method: 'post', path: () => `/api/scenarios/${scenarioId}/duplicate`, body: mutations(() => ({ title: 'Fuzzed copy' })), runs: 150 },
  { name: 'GET /api/scenarios/:id/export', agent: () => teacher, method: 'get', path: () => `/api/scenarios/${scenarioId}/export`, query: queryMutations(['version']), runs: 150 },
  { name: 'POST /api/classes', agent: () => teacher, method: 'post', path: () => '/api/classes', body: mutations(() => ({ name: 'Fuzz class', term: 'Spring', instructorIds: [] })), runs: 250 },
  {
    name: 'POST /api/classes/:id/students',
    agent: () => teacher,
    method: 'post',
    path: () => `/api/classes/${fx.classId}/students`,
    body: mutations(() => ({ email: `fuzz.${++n}@fuzz.example`, name: 'Vale Fuzzwright' })),
    runs: 250,
  },
  { name: 'GET /api/assignments', agent: () => teacher, method: 'get', path: () => '/api/assignments', query: queryMutations(['classId']), runs: 150 },
  {
    name: 'POST /api/assignments',
    agent: () => teacher,
    method: 'post',
    path: () => '/api/assignments',
    body: mutations(() => ({
      classId: fx.classId,
      scenarioId: sharedScenarioId,
      title: 'Fuzzed work',
      opensAt: '2026-01-05T09:00:00Z',
      dueAt: '2026-01-12T09:00:00Z',
      attemptsAllowed: 2,
      showCurveAfter: true,
      showFeedbackAfter: true,
    })),
    runs: 300,
  },
];

// Built once the fixtures exist (the valid bodies name their ids).
const NAMES = [
  'GET /api/scenarios',
  'POST /api/scenarios',
  'POST /api/scenarios/import (document fields)',
  'PUT /api/scenarios/:id',
  'PATCH /api/scenarios/:id',
  'POST /api/scenarios/:id/publish',
  'POST /api/scenarios/:id/restore',
  'POST /api/scenarios/:id/duplicate',
  'GET /api/scenarios/:id/export',
  'POST /api/classes',
  'POST /api/classes/:id/students',
  'GET /api/assignments',
  'POST /api/assignments',
];

describe('fuzzing the library and class routes', () => {
  it('has a target for each name', () => {
    expect(targets().map((x) => x.name)).toEqual(NAMES);
  });

  it.each(NAMES)('%s: no 5xx, 4xx name the field, rejected requests write nothing', async (name) => {
    await runTarget(ck, targets().find((x) => x.name === name)!);
  }, FUZZ_TIMEOUT_MS);

  it('ran every planned case', () => {
    // The plan is the target list the runs above iterate: each target ran its own number of cases.
    expectRanThePlan(ck, targets());
  });
});
