/**
 * The answer key: a student with an assigned attempt on a faulted scenario
 * walks every response they can get before submitting (every route of the
 * table with their own ids, the bench's stream, error bodies) and none of them
 * names the fault: no fault kind, no catalog label, no `faults` or `fault`
 * key, not the fault's id or severity. The bench is sent the car it must
 * simulate (docs/decisions/001): parameters, and a schedule of parameter
 * changes under opaque ids, each with the onset at which it comes on; that
 * onset is the one thing of the fault a response may carry, and only there.
 * After submission the result reveals the fault.
 *
 * Source: OWASP ASVS 4.0 level 2, V8.3.1 (sensitive data is not sent to a
 * client that has no need of it) and V4.2.1 (no access by changing an id).
 */
import { eq } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { attempts, assignments, scenarios, scenarioVersions } from '../../server/db/schema.ts';
import type { AttemptBootstrap } from '../../shared/api/attempts.ts';
import { liveFaultId } from '../../shared/api/live.ts';
import { FAULT_KINDS, faultOps } from '../../sim/faults.ts';
import { FAULT_TEXT } from '../../shared/fault-catalogue-text.ts';
import { blankScenario, DIAGNOSTIC_TESTS, type ScenarioDefinition } from '../../shared/scenario.ts';
import { httpSignIn, instructor, listen, makeClass, openStream, students, type ClassFixture, type HttpClient } from './live-fixtures.ts';
import { signIn, startTestApp, type Agent, type TestApp } from './support.ts';

const FAULT_ID = 'hidden-fault-q7x';
const SEVERITY = 0.6180339;
const ONSET_S = 3.14159;
const KIND = 'regulator-set-high' as const;
/** The instructor's live injection during the attempt. */
const LIVE_KIND = 'belt-slip' as const;
const LIVE_SEVERITY = 0.4321;

function faultedScenario(kind: ScenarioDefinition['faults'][number]['kind'], choices: ScenarioDefinition['diagnosisChoices']): ScenarioDefinition {
  const def = blankScenario();
  def.title = 'Bulbs that keep failing';
  def.summary = 'The owner replaces headlamp bulbs every few weeks. Test the charging system and say what is wrong.';
  def.faults = [{ id: FAULT_ID, kind, severity01: SEVERITY, onsetS: ONSET_S, intermittent: null }];
  def.diagnosisChoices = choices;
  return def;
}

/**
 * Where a change of the car sits in a response: the compiled car's schedule
 * (`car.changes.N`, in the bootstrap and the replay) and a single change (the
 * bench stream's injection and the log's `change-apply` events, `….change`).
 */
const CHANGE_AT = /(^|\.)(car\.changes\.\d+|change)$/;

/**
 * What in a response names a fault. The diagnosis choices (the answer among
 * distractors) and the family of tests must list kinds, so those two lists
 * are left out; every other byte of the raw text is searched. A kind that is
 * also the name of a test ("key-off-draw", as in a competency) is searched by
 * its label only; a message that lists the whole catalog (an enum's error)
 * singles nothing out.
 *
 * The onset is left out where, and only where, it is a change's `onsetS`: the
 * bench cannot run a car whose fault comes on at 3.14 s without being told
 * that something changes then, and a change carries no kind, label, severity
 * or the author's fault id (its id is opaque, its operations are parameter
 * arithmetic). An `onsetS` key, or the scenario's onset, anywhere else (a
 * fault object, a summary, an error) is a leak.
 */
function leaks(text: string): string[] {
  let searched = text;
  try {
    const strip = (x: unknown, at: string): unknown => {
      if (Array.isArray(x)) return x.map((v, i) => strip(v, `${at}.${i}`));
      if (x && typeof x === 'object') {
        const isChange = CHANGE_AT.test(at);
        return Object.fromEntries(
          Object.entries(x as Record<string, unknown>)
            .filter(([k]) => k !== 'diagnosisChoices' && k !== 'tests' && !(isChange && k === 'onsetS'))
            .map(([k, v]) => [k, strip(v, at ? `${at}.${k}` : k)]),
        );
      }
      return x;
    };
    searched = JSON.stringify(strip(JSON.parse(text), ''));
  } catch {
    // Not JSON (a CSV, a stream): search the raw text.
  }
  const lower = searched.toLowerCase();
  const kinds = FAULT_KINDS.filter((kind) => searched.includes(kind));
  const found: string[] = kinds.length === FAULT_KINDS.length ? [] : kinds.filter((kind) => !(DIAGNOSTIC_TESTS as readonly string[]).includes(kind));
  for (const kind of FAULT_KINDS) if (lower.includes(FAULT_TEXT[kind].label.toLowerCase())) found.push(FAULT_TEXT[kind].label);
  for (const needle of ['"faults"', '"fault"', '"severity01"', '"onsetS"', FAULT_ID, String(SEVERITY), String(ONSET_S), String(LIVE_SEVERITY)]) {
    if (searched.includes(needle)) found.push(needle);
  }
  return found;
}

let t: TestApp;
let server: { url: string; close(): Promise<void> };
let fx: ClassFixture;
let student: Agent;
let teacher: Agent;
let attemptId: number;
let scenarioId: number;
let otherAssignmentId: number;
/** The assigned scenario's definition. */
const fxDefinition = faultedScenario(KIND, [KIND, 'none', 'diode-open', 'belt-slip', 'regulator-set-low']);

async function addAssignment(def: ScenarioDefinition, title: string): Promise<{ assignmentId: number; scenarioId: number }> {
  const db = t.ctx.db;
  const [sc] = await db.insert(scenarios).values({ slug: `answer-key-${Math.random().toString(36).slice(2, 9)}`, ownerId: fx.instructorId, visibility: 'shared', latestVersion: 1 }).returning({ id: scenarios.id });
  const [ver] = await db.insert(scenarioVersions).values({ scenarioId: sc!.id, version: 1, title: def.title, definition: def, createdBy: fx.instructorId }).returning({ id: scenarioVersions.id });
  await db.update(scenarios).set({ publishedVersionId: ver!.id }).where(eq(scenarios.id, sc!.id));
  const [asg] = await db
    .insert(assignments)
    .values({ classId: fx.classId, scenarioVersionId: ver!.id, title, opensAt: new Date(Date.now() - 3_600_000), dueAt: new Date(Date.now() + 86_400_000), createdBy: fx.instructorId })
    .returning({ id: assignments.id });
  return { assignmentId: asg!.id, scenarioId: sc!.id };
}

beforeAll(async () => {
  t = await startTestApp();
  server = await listen(t);
  // The author lists the answer first among the choices, as the editor does.
  fx = await makeClass(t.ctx.db, { students: 1, definition: fxDefinition, name: 'Answer-key section' });
  const [version] = await t.ctx.db.select({ scenarioId: scenarioVersions.scenarioId }).from(scenarioVersions).where(eq(scenarioVersions.id, fx.scenarioVersionId));
  scenarioId = version!.scenarioId;
  // The same choices, another answer, listed first by its author.
  otherAssignmentId = (await addAssignment(faultedScenario('diode-open', ['diode-open', 'belt-slip', KIND, 'none', 'regulator-set-low']), 'Week 4: whine on the radio')).assignmentId;
  student = await signIn(t.app, students[0]!.email);
  teacher = await signIn(t.app, instructor.email);
});

afterAll(async () => {
  await server?.close();
  await t?.close();
});

describe('the answer key before submission', () => {
  const seen: { what: string; status: number; text: string }[] = [];
  const record = (what: string, status: number, text: string) => seen.push({ what, status, text });

  it('starts the attempt and posts events; the bootstrap carries the car to simulate, with no fault list and nothing sealed', async () => {
    const started = await student.post('/api/attempts').send({ assignmentId: fx.assignmentId });
    expect(started.status).toBe(201);
    attemptId = started.body.attempt.id as number;
    record('POST /api/attempts', started.status, started.text);
    const boot = started.body as AttemptBootstrap;
    // Nothing travels sealed beside the car, and there is no key to open anything with.
    expect(Object.keys(boot).sort()).toEqual(['attempt', 'car', 'events', 'result', 'scenario']);
    expect(Object.keys(boot.car).sort()).toEqual(['changes', 'params']);
    // The fault comes on at its onset, so it is a scheduled change: an opaque id, its onset, parameter operations.
    expect(boot.car.changes).toEqual([{ id: 'c1', onsetS: ONSET_S, intermittent: null, ops: faultOps({ kind: KIND, severity01: SEVERITY }) }]);
    // Until then the car is the healthy one, labelled with the vehicle's name, not the author's parameter set.
    expect(boot.car.params).toEqual({ ...fxDefinition.vehicle.params, label: fxDefinition.vehicle.name });

    const events = await student.post(`/api/attempts/${attemptId}/events`).send({
      events: [
        { seq: 1, event: { kind: 'key', atMs: 0, position: 'start' } },
        { seq: 2, event: { kind: 'key', atMs: 2000, position: 'on' } },
        { seq: 3, event: { kind: 'rpm', atMs: 3000, rpm: 2000 } },
      ],
    });
    expect(events.status).toBe(200);
    record('POST events', events.status, events.text);

    // Guessing: a fault event the instructor did not inject is refused, and the refusal says nothing of the real one.
    const guess = await student.post(`/api/attempts/${attemptId}/events`).send({
      events: [{ seq: 4, event: { kind: 'fault-inject', atMs: 4000, fault: { id: 'guess', kind: 'diode-open', severity01: 1, onsetS: 0, intermittent: null } } }],
    });
    expect(guess.status).toBe(400);
    record('POST events (guessed fault)', guess.status, guess.text.replaceAll('diode-open', '<guess>'));
    // Nor is a change of the car that logs no injection delivered to this bench.
    const change = await student.post(`/api/attempts/${attemptId}/events`).send({
      events: [{ seq: 4, event: { kind: 'change-apply', atMs: 4000, change: { id: 'guess', onsetS: 4, intermittent: null, ops: faultOps({ kind: 'diode-open', severity01: 1 }) } } }],
    });
    expect(change.status).toBe(400);
    record('POST events (guessed change)', change.status, change.text);
    const clear = await student.post(`/api/attempts/${attemptId}/events`).send({ events: [{ seq: 4, event: { kind: 'fault-clear', atMs: 4000, faultId: 'guess' } }] });
    expect(clear.status).toBe(400);
    record('POST events (guessed clear)', clear.status, clear.text);
    const badSubmit = await student.post(`/api/attempts/${attemptId}/submit`).send({ atMs: -1, readings: 'none', diagnosis: { faultKind: 'not-a-kind' } });
    expect(badSubmit.status).toBe(400);
    record('POST submit (malformed)', badSubmit.status, badSubmit.text.replaceAll('not-a-kind', '<sent>'));
  });

  it('the instructor injects a live fault; the bench stream sends it as a change of the car under an opaque id', async () => {
    const injected = await teacher.post(`/api/live/attempts/${attemptId}/inject`).send({ kind: LIVE_KIND, severity01: LIVE_SEVERITY });
    expect(injected.status).toBe(201);
    const injectionId = (injected.body as { injection: { injectionId: number } }).injection.injectionId;
    const client: HttpClient = await httpSignIn(server.url, students[0]!.email);
    const stream = await openStream(client, `/api/live/attempts/${attemptId}/stream`);
    try {
      expect(stream.status).toBe(200);
      const status = await stream.next((m) => m.event === 'status', 15_000);
      const injection = await stream.next((m) => m.event === 'injection', 15_000);
      // What the bench needs to run it and to log it: the id it logs it under, when it comes on (the delay), the operations.
      expect(injection.data).toEqual({ type: 'inject', injectionId, change: { id: liveFaultId(injectionId), onsetS: 0, intermittent: null, ops: faultOps({ kind: LIVE_KIND, severity01: LIVE_SEVERITY }) } });
      record('bench stream: status', 200, JSON.stringify(status.data));
      record('bench stream: injection', 200, JSON.stringify(injection.data));
    } finally {
      stream.close();
    }
  });

  it('walks every route of the table with the student’s own ids', async () => {
    const version = fx.scenarioVersionId;
    const idFor = (path: string, param: string): number => {
      if (param === 'classId') return fx.classId;
      if (param === 'userId') return fx.studentIds[0]!;
      if (param === 'versionId') return version;
      if (/\/attempts\/:id/.test(path)) return attemptId;
      if (/\/assignments\/:id/.test(path)) return fx.assignmentId;
      if (/\/scenarios\/:id/.test(path)) return scenarioId;
      if (/\/classes\/:id/.test(path)) return fx.classId;
      return fx.studentIds[0]!;
    };
    let walked = 0;
    for (const route of t.routes) {
      // Signing in or out would change whose responses these are.
      if (route.path.startsWith('/api/auth/') && route.path !== '/api/auth/me') continue;
      if (route.path.endsWith('/stream')) continue; // read above, as a stream
      const path = route.path.replace(/:(\w+)/g, (_m, name: string) => String(idFor(route.path, name)));
      const query = route.path === '/api/assignments' ? `?classId=${fx.classId}` : '';
      const res = route.method === 'get' ? await student.get(path + query) : await student[route.method](path).send({});
      expect(res.status, `${route.method} ${route.path}`).toBeLessThan(500);
      record(`${route.method.toUpperCase()} ${route.path} (${res.status})`, res.status, res.text ?? '');
      walked++;
    }
    expect(walked).toBeGreaterThan(40);
    // The walk sent nothing that submitted the attempt.
    const [row] = await t.ctx.db.select({ status: attempts.status }).from(attempts).where(eq(attempts.id, attemptId));
    expect(row?.status).toBe('running');
    // The class's own views a student reaches were among them.
    const reached = seen.filter((s) => s.status === 200).map((s) => s.what);
    for (const must of ['GET /api/attempts/:id', 'GET /api/attempts/mine', 'GET /api/assignments/mine', 'GET /api/assignments/:id', 'GET /api/scenarios/practice', 'GET /api/compare/assignments/:id', 'GET /api/sign-offs/me']) {
      expect(reached.some((w) => w.startsWith(`${must} (`)), must).toBe(true);
    }
  });

  it('finds no fault kind, label, key, id or severity in any of them, and the onset only as a change’s', () => {
    // The search leaves out a change's onset, and nothing else: the same onset outside a change is found.
    expect(leaks(JSON.stringify({ car: { changes: [{ id: 'c1', onsetS: ONSET_S }] }, events: [{ event: { change: { onsetS: ONSET_S } } }] }))).toEqual([]);
    expect(leaks(JSON.stringify({ car: { onsetS: ONSET_S }, hint: { onsetS: ONSET_S } }))).toEqual(['"onsetS"', String(ONSET_S)]);
    expect(leaks(JSON.stringify({ car: { changes: [{ id: FAULT_ID, onsetS: 0, severity01: SEVERITY }] } }))).toEqual(['"severity01"', FAULT_ID, String(SEVERITY)]);
    expect(seen.length).toBeGreaterThan(45);
    const found = seen.flatMap((s) => leaks(s.text).map((l) => `${s.what}: ${l}`));
    expect(found).toEqual([]);
  });

  it('does not give the answer away by the order of the diagnosis choices', async () => {
    // Two assignments offer the same five choices, each author listing their own answer first.
    const mine = await student.get(`/api/assignments/${fx.assignmentId}`).expect(200);
    const other = await student.get(`/api/assignments/${otherAssignmentId}`).expect(200);
    expect([...mine.body.scenario.diagnosisChoices].sort()).toEqual([...other.body.scenario.diagnosisChoices].sort());
    expect(mine.body.scenario.diagnosisChoices).toEqual(other.body.scenario.diagnosisChoices);
    const boot = await student.get(`/api/attempts/${attemptId}`).expect(200);
    expect(boot.body.scenario.diagnosisChoices.map((c: { value: string }) => c.value)).toEqual(mine.body.scenario.diagnosisChoices);
  });
});

describe('the answer key after submission', () => {
  it('reveals the fault in the result', async () => {
    const res = await student.post(`/api/attempts/${attemptId}/submit`).send({ atMs: 5000, readings: [], diagnosis: { verdicts: [], faultKind: 'none', notes: '' } });
    expect(res.status).toBe(200);
    expect(res.body.fault.actual).toContain(KIND);
    expect(res.body.fault.ok).toBe(false);
    expect(res.body.fault.labels).toContain(FAULT_TEXT[KIND].label);
    const again = await student.get(`/api/attempts/${attemptId}`).expect(200);
    expect(again.body.result.fault.actual).toContain(KIND);
    expect(leaks(again.text)).toContain(KIND);
  });
});
