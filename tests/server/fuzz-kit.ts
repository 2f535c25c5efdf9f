/**
 * Shared pieces of the fuzz tests: hostile and valid-looking inputs made by
 * fast-check, a request runner, and the checks every answer must pass: no
 * 5xx, every 4xx with error.message, a 400 or 413 naming the field, and a
 * rejected request writing nothing (a fingerprint of the tables it could touch).
 *
 * Source: OWASP ASVS 4.0 level 2, V5.1.3 (all input validated, positive
 * allow lists), V5.1.4 (structured data checked), V7.4.1 (a generic error
 * message, no stack), V13.1.3 / V13.2.x (the API rejects what it does not expect).
 */
import fc from 'fast-check';
import type pg from 'pg';
import { expect } from 'vitest';
import type { Agent } from './support.ts';

const HOSTILE_TEXT = [
  "' OR '1'='1",
  "'; drop table users; --",
  '1; select pg_sleep(5)',
  '<script>alert(1)</script>',
  '"><img src=x onerror=alert(1)>',
  '{{7*7}}${7*7}',
  '../../../../etc/passwd',
  '\u0000',
  '\u202e\u0000\ufeff',
  '%00%0d%0a',
  '=CMD("calc")',
  '\ud800',
  'null',
  'undefined',
  '__proto__',
  '😀'.repeat(300),
  'é'.repeat(5000),
];

/** Strings a careless server chokes on: SQL and script text, control and lone-surrogate characters, huge ones. */
export const hostileString: fc.Arbitrary<string> = fc.oneof(
  { weight: 4, arbitrary: fc.constantFrom(...HOSTILE_TEXT) },
  { weight: 3, arbitrary: fc.string({ maxLength: 40 }) },
  { weight: 2, arbitrary: fc.string({ unit: 'binary', maxLength: 40 }) },
  { weight: 1, arbitrary: fc.integer({ min: 1_000, max: 120_000 }).map((n) => 'x'.repeat(n)) },
);

const hostileNumber: fc.Arbitrary<number> = fc.oneof(
  fc.integer(),
  fc.double(),
  fc.constantFrom(0, -1, 2 ** 31, 2 ** 53, -(2 ** 63), Number.MAX_VALUE, Number.MIN_VALUE, 1e308, 0.1),
);

/** Any JSON value, nested a little, hostile in its leaves. */
export const anyJson: fc.Arbitrary<unknown> = fc.letrec<{ value: unknown }>((tie) => ({
  value: fc.oneof(
    { depthSize: 'small', withCrossShrink: true },
    hostileString,
    hostileNumber,
    fc.boolean(),
    fc.constant(null),
    fc.array(tie('value'), { maxLength: 4 }),
    fc.dictionary(fc.oneof(fc.string({ maxLength: 10 }), fc.constantFrom('__proto__', 'constructor', 'prototype', 'id', 'role')), tie('value'), { maxKeys: 4 }),
  ),
})).value;

/** JSON text nested deeper than any real document. */
export const deepNesting: fc.Arbitrary<string> = fc
  .tuple(fc.integer({ min: 50, max: 20_000 }), fc.constantFrom('array', 'object'))
  .map(([depth, kind]) => (kind === 'array' ? `${'['.repeat(depth)}1${']'.repeat(depth)}` : `${'{"a":'.repeat(depth)}1${'}'.repeat(depth)}`));

type Body = Record<string, unknown>;

/**
 * Valid-looking inputs: the valid body with one field replaced by a hostile
 * value, one field removed, an unexpected field added, or a whole hostile value.
 */
export function mutations(valid: () => Body): fc.Arbitrary<unknown> {
  const keys = Object.keys(valid());
  const replaceOne = fc.tuple(fc.constantFrom(...keys), anyJson).map(([k, v]) => ({ ...valid(), [k]: v }));
  const dropOne = fc.constantFrom(...keys).map((k) => {
    const b = valid();
    delete b[k];
    return b;
  });
  const addOne = fc.tuple(fc.constantFrom('__proto__', 'constructor', 'isAdmin', 'role', 'userId', 'ownerId', 'id', 'extra'), anyJson).map(([k, v]) => {
    const b = valid();
    Object.defineProperty(b, k, { value: v, enumerable: true, configurable: true, writable: true });
    return b;
  });
  const deepOne = fc.tuple(fc.constantFrom(...keys), fc.integer({ min: 20, max: 400 })).map(([k, depth]) => {
    let v: unknown = 1;
    for (let i = 0; i < depth; i++) v = { v };
    return { ...valid(), [k]: v };
  });
  return fc.oneof(
    { weight: 5, arbitrary: replaceOne },
    { weight: 2, arbitrary: dropOne },
    { weight: 2, arbitrary: addOne },
    { weight: 1, arbitrary: deepOne },
    { weight: 2, arbitrary: anyJson },
  );
}

/** Hostile query strings: each parameter a hostile string, repeated (an array to Express) or nested with brackets. */
export function queryMutations(names: readonly string[]): fc.Arbitrary<string> {
  const one = fc.tuple(fc.constantFrom(...names, 'zzz', '__proto__'), hostileString, fc.constantFrom('plain', 'repeat', 'bracket')).map(([name, value, shape]) => {
    // Lone surrogates cannot be percent-encoded as UTF-8: send their replacement. Kept under the
    // URL length a server accepts at all (Node answers a longer one with a bare 431).
    const v = encodeURIComponent(value.replace(/(?<![\ud800-\udbff])[\udc00-\udfff]|[\ud800-\udbff](?![\udc00-\udfff])/g, '\ufffd')).slice(0, 3000).replace(/%[0-9A-F]?$/, '');
    if (shape === 'repeat') return `${name}=${v}&${name}=${v}`;
    if (shape === 'bracket') return `${name}[a][b]=${v}`;
    return `${name}=${v}`;
  });
  return fc.array(one, { minLength: 1, maxLength: 3 }).map((parts) => parts.join('&'));
}

export interface Answer {
  status: number;
  body: { error?: { message?: unknown; field?: unknown; issues?: { path?: unknown }[] } } | undefined;
  text: string;
}

/** Sends a JSON value (any value, not only objects) or raw text as the body. */
export async function sendJson(agent: Agent, method: 'post' | 'put' | 'patch' | 'get' | 'delete', path: string, body: unknown, raw = false): Promise<Answer> {
  const req = agent[method](path).set('Content-Type', 'application/json');
  const res = await req.send(raw ? (body as string) : JSON.stringify(body) ?? 'null');
  return { status: res.status, body: res.body as Answer['body'], text: res.text ?? '' };
}

export function namesField(body: Answer['body']): boolean {
  const e = body?.error;
  if (typeof e?.field === 'string' && e.field.length > 0) return true;
  return Array.isArray(e?.issues) && e.issues.some((i) => typeof i.path === 'string' && i.path.length > 0);
}

/**
 * A fingerprint of everything a request could write: row counts and the
 * editable columns of the tables the API changes.
 */
export async function fingerprint(pool: pg.Pool): Promise<string> {
  const { rows } = await pool.query(`select
    (select count(*) from users) u, (select md5(coalesce(string_agg(name || role || disabled::text || coalesce(password_hash, ''), ',' order by id), '')) from users) uf,
    (select count(*) from classes) c, (select count(*) from enrollments) e, (select count(*) from class_instructors) ci,
    (select count(*) from scenarios) s, (select md5(coalesce(string_agg(visibility || archived::text || latest_version || coalesce(published_version_id, 0), ',' order by id), '')) from scenarios) sf,
    (select count(*) from scenario_versions) sv, (select count(*) from assignments) a,
    (select count(*) from attempts) at, (select md5(coalesce(string_agg(status || last_seq, ',' order by id), '')) from attempts) atf,
    (select count(*) from attempt_events) ev, (select count(*) from pending_injections) pi,
    (select count(*) from comments) cm, (select count(*) from sign_offs) so, (select count(*) from roster_imports) ri,
    (select count(*) from outbox) ob`);
  return JSON.stringify(rows[0]);
}

export interface Checker {
  /**
   * Checks one answer; `validated` says the route validates this input (so a 400 names a field).
   * `plan` names the planned run the case belongs to (the target's name unless given).
   */
  check(what: string, answer: Answer, plan?: string): Promise<void>;
  /** Takes a new baseline after the test itself wrote something. */
  rebase(): Promise<void>;
  /** Cases checked in all. */
  cases(): number;
  /** Cases checked for each planned run, by its name. */
  casesByPlan(): Record<string, number>;
}

export async function checker(pool: pg.Pool): Promise<Checker> {
  let last = await fingerprint(pool);
  let count = 0;
  const byPlan: Record<string, number> = {};
  return {
    cases: () => count,
    casesByPlan: () => ({ ...byPlan }),
    async rebase() {
      last = await fingerprint(pool);
    },
    async check(what, answer, plan = what) {
      count++;
      byPlan[plan] = (byPlan[plan] ?? 0) + 1;
      const label = `${what} -> ${answer.status} ${answer.text.slice(0, 200)}`;
      const before = last;
      const now = await fingerprint(pool);
      // The next case compares with this state, whatever this one's checks find.
      last = now;
      expect(answer.status, label).toBeLessThan(500);
      if (answer.status >= 400) {
        expect(typeof answer.body?.error?.message, label).toBe('string');
        if (answer.status === 400 || answer.status === 413) expect(namesField(answer.body), `names the field: ${label}`).toBe(true);
        expect(now, `a rejected request wrote nothing: ${label}`).toBe(before);
        // Nothing of the server's insides in the message.
        expect(answer.text, label).not.toMatch(/\bat \S+\.(ts|js):\d+|node_modules|SELECT |violates .* constraint/);
      }
    },
  };
}

export interface Target {
  name: string;
  agent: () => Agent;
  method: 'post' | 'put' | 'patch' | 'get' | 'delete';
  path: () => string;
  /** JSON bodies to send. */
  body?: fc.Arbitrary<unknown>;
  /** Query strings to add to the path (GET). */
  query?: fc.Arbitrary<string>;
  runs: number;
  /** After each answer (e.g. a fresh attempt once one was submitted). */
  after?: (answer: Answer) => Promise<void>;
}

export async function runTarget(ck: Checker, target: Target): Promise<void> {
  const send = async (input: unknown): Promise<Answer> => {
    const path = target.path();
    if (target.query) {
      const res = await target.agent().get(`${path}${path.includes('?') ? '&' : '?'}${input as string}`);
      return { status: res.status, body: res.body as Answer['body'], text: res.text ?? '' };
    }
    return sendJson(target.agent(), target.method, path, input);
  };
  const arbitrary = (target.query ?? target.body) as fc.Arbitrary<unknown>;
  await fc.assert(
    fc.asyncProperty(arbitrary, async (input) => {
      const answer = await send(input);
      await ck.check(target.name, answer);
      await target.after?.(answer);
    }),
    { numRuns: target.runs },
  );
}

/**
 * The plan a file's "ran every planned case" check compares with: each planned
 * run's name and case count, taken from the very list the runs iterate.
 */
export function planOf(runs: readonly { name: string; runs: number }[]): { byPlan: Record<string, number>; total: number } {
  const byPlan: Record<string, number> = {};
  for (const r of runs) {
    if (r.name in byPlan) throw new Error(`two planned runs are named "${r.name}"`);
    byPlan[r.name] = r.runs;
  }
  return { byPlan, total: runs.reduce((sum, r) => sum + r.runs, 0) };
}

/** Checks that every planned run ran each of its cases, and nothing else ran. */
export function expectRanThePlan(ck: Checker, runs: readonly { name: string; runs: number }[]): void {
  const plan = planOf(runs);
  expect(plan.total).toBeGreaterThan(0);
  expect(ck.casesByPlan()).toEqual(plan.byPlan);
  expect(ck.cases()).toBe(plan.total);
}

/** A fuzz test runs many requests: a generous limit for a busy machine (no test fails on speed below it). */
export const FUZZ_TIMEOUT_MS = 240_000;
