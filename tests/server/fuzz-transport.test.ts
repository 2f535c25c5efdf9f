/**
 * Fuzzing the account routes' bodies and queries, and every route with a body
 * at the transport level: malformed JSON, deep nesting, oversized bodies,
 * wrong content types, hostile path ids. Checks and sources: fuzz-kit.ts.
 */
import fc from 'fast-check';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DEMO_PEOPLE } from '../../server/db/demo-people.ts';
import { users } from '../../server/db/schema.ts';
import type { RouteSpec } from '../../server/http/route-table.ts';
import { checker, expectRanThePlan, FUZZ_TIMEOUT_MS, deepNesting, hostileString, mutations, queryMutations, runTarget, sendJson, type Checker, type Target } from './fuzz-kit.ts';
import { anonymousAgent, signIn, startTestApp, type Agent, type TestApp } from './support.ts';

let t: TestApp;
let anon: Agent;
let admin: Agent;
let instructorAgent: Agent;
let studentAgent: Agent;
let ck: Checker;
let target: number;
let n = 0;

beforeAll(async () => {
  t = await startTestApp();
  anon = await anonymousAgent(t.app);
  admin = await signIn(t.app, DEMO_PEOPLE.find((p) => p.role === 'admin')!.email);
  instructorAgent = await signIn(t.app, DEMO_PEOPLE.find((p) => p.role === 'instructor')!.email);
  studentAgent = await signIn(t.app, DEMO_PEOPLE.find((p) => p.role === 'student')!.email);
  const [u] = await t.ctx.db.insert(users).values({ email: 'fuzz.target@fuzz.example', name: 'Wren Fuzzby', role: 'student' }).returning({ id: users.id });
  target = u!.id;
  ck = await checker(t.ctx.pool);
});
afterAll(async () => {
  await t?.close();
});

const accountTargets = (): Target[] => [
  // Valid-looking sign-ins and new passwords cost a bcrypt hash each: fewer cases.
  { name: 'POST /api/auth/sign-in', agent: () => anon, method: 'post', path: () => '/api/auth/sign-in', body: mutations(() => ({ email: 'nobody@fuzz.example', password: 'wrong-password' })), runs: 60 },
  { name: 'POST /api/auth/password-reset', agent: () => anon, method: 'post', path: () => '/api/auth/password-reset', body: mutations(() => ({ email: 'nobody@fuzz.example' })), runs: 300 },
  { name: 'POST /api/auth/set-password', agent: () => anon, method: 'post', path: () => '/api/auth/set-password', body: mutations(() => ({ token: 't'.repeat(43), password: 'a-new-long-password' })), runs: 60 },
  { name: 'GET /api/users', agent: () => admin, method: 'get', path: () => '/api/users', query: queryMutations(['role', 'q']), runs: 300 },
  { name: 'POST /api/users', agent: () => admin, method: 'post', path: () => '/api/users', body: mutations(() => ({ email: `fuzz.made.${++n}@fuzz.example`, name: 'Yara Fuzzmade', role: 'student' })), runs: 150 },
  { name: 'PATCH /api/users/:id', agent: () => admin, method: 'patch', path: () => `/api/users/${target}`, body: mutations(() => ({ name: 'Wren Renamed', role: 'student', disabled: false })), runs: 300 },
];
const ACCOUNT_NAMES = ['POST /api/auth/sign-in', 'POST /api/auth/password-reset', 'POST /api/auth/set-password', 'GET /api/users', 'POST /api/users', 'PATCH /api/users/:id'];

/** The client a route's own role would use, so the request reaches its input checks. */
function agentFor(route: RouteSpec): Agent {
  if (route.access === 'public') return anon;
  if (route.access === 'signed-in') return instructorAgent;
  if (route.access.includes('instructor')) return instructorAgent;
  if (route.access.includes('student')) return studentAgent;
  return admin;
}

const withBody = () => t.routes.filter((r) => r.method !== 'get' && r.method !== 'delete' && !r.path.endsWith('/sign-out') && !r.path.endsWith('/sign-in'));
const concrete = (path: string) => path.replace(/:\w+/g, '1');

/** Raw bodies: broken JSON, JSON nested thousands deep, bodies over the size limit. */
const rawBody: fc.Arbitrary<{ text: string; type: string }> = fc.oneof(
  { weight: 4, arbitrary: fc.constantFrom('{', '{"a":', '[1,2', '{"a":1,}', "{'a':1}", 'nul', '"unterminated', '{"a":NaN}', '\u0000', '{"__proto__":{"isAdmin":true}}').map((text) => ({ text, type: 'application/json' })) },
  { weight: 3, arbitrary: deepNesting.map((text) => ({ text, type: 'application/json' })) },
  { weight: 1, arbitrary: fc.integer({ min: 262_145, max: 400_000 }).map((size) => ({ text: `{"a":"${'x'.repeat(size)}"}`, type: 'application/json' })) },
  { weight: 2, arbitrary: hostileString.map((text) => ({ text, type: 'text/plain' })) },
  { weight: 1, arbitrary: fc.constantFrom('<a>1</a>', 'a=1&b=2').map((text) => ({ text, type: text.startsWith('<') ? 'application/xml' : 'application/x-www-form-urlencoded' })) },
);

describe('fuzzing the account routes', () => {
  it('has a target for each name', () => {
    expect(accountTargets().map((x) => x.name)).toEqual(ACCOUNT_NAMES);
  });
  it.each(ACCOUNT_NAMES)('%s: no 5xx, 4xx name the field, rejected requests write nothing', async (name) => {
    await runTarget(ck, accountTargets().find((x) => x.name === name)!);
  }, FUZZ_TIMEOUT_MS);
});

/** The two transport-level runs, by name and case count (the runs below and the closing check both read these). */
const RAW_BODIES = { name: 'raw bodies to every route with a body', runs: 1900 };
const HOSTILE_IDS = { name: 'hostile path ids', runs: 1380 };

describe('fuzzing every route with a body at the transport level', () => {
  it('sends broken, deeply nested, oversized and wrongly typed bodies to every route with a body', async () => {
    const routes = withBody();
    expect(routes.length).toBeGreaterThanOrEqual(20);
    await fc.assert(
      fc.asyncProperty(fc.constantFrom(...routes), rawBody, async (route, body) => {
        const res = await agentFor(route)[route.method](concrete(route.path)).set('Content-Type', body.type).send(body.text);
        await ck.check(`${route.method.toUpperCase()} ${route.path} (${body.type}, ${body.text.length} bytes)`, { status: res.status, body: res.body, text: res.text ?? '' }, RAW_BODIES.name);
      }),
      { numRuns: RAW_BODIES.runs },
    );
  }, FUZZ_TIMEOUT_MS);

  it('sends hostile ids in the path of every route that has one', async () => {
    const routes = t.routes.filter((r) => r.path.includes('/:') && !r.path.endsWith('/stream'));
    const hostileId = fc.oneof(
      fc.constantFrom('0', '-1', '1.5', '1e3', '9999999999999999999999', 'NaN', 'null', '0x10', ' 1', '%00', '1;drop table users', "1' or '1'='1", '%E2%80%AE1', '%F0%9F%98%80'),
      fc.string({ minLength: 1, maxLength: 30 }).map((s) => encodeURIComponent(s.replace(/[\ud800-\udfff]/g, '?'))),
    );
    await fc.assert(
      fc.asyncProperty(fc.constantFrom(...routes), hostileId, async (route, id) => {
        const path = route.path.replace(/:\w+/g, id);
        const res = route.method === 'get' || route.method === 'delete' ? await agentFor(route)[route.method](path) : await sendJson(agentFor(route), route.method, path, {}).then((a) => ({ status: a.status, body: a.body, text: a.text }));
        await ck.check(`${route.method.toUpperCase()} ${route.path} with id ${id}`, { status: res.status, body: res.body, text: res.text ?? '' }, HOSTILE_IDS.name);
      }),
      { numRuns: HOSTILE_IDS.runs },
    );
  }, FUZZ_TIMEOUT_MS);

  it('ran every planned case', () => {
    // The plan is the account targets and the two transport runs, as the runs above read them.
    expectRanThePlan(ck, [...accountTargets(), RAW_BODIES, HOSTILE_IDS]);
  });
});
