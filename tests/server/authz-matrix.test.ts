/**
 * The authorisation matrix, generated from the route table: every API route
 * is called as each of seven actors with real ids, and the answer must be the
 * one EXPECTED gives. A route with no entry fails the test, and so does an
 * entry for a route that no longer exists. The seventh actor is the
 * instructor of another class that shares the student: teaching the student
 * elsewhere opens none of this class's work.
 *
 * Source: OWASP ASVS 4.0 level 2, V4.1.1 (access rules enforced on the
 * server), V4.1.3 (least privilege), V4.1.5 (fail securely), V4.2.1 (no
 * access to other users' records by changing an id: IDOR).
 */
import { eq } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DEMO_PEOPLE } from '../../server/db/demo-people.ts';
import { hashPassword } from '../../server/accounts/passwords.ts';
import { assignments, classes, classInstructors, enrollments, signOffs, users } from '../../server/db/schema.ts';
import { ltiDeepLinkRequests, ltiPlatforms, ltiScoreOutbox } from '../../server/lti/tables.ts';
import type { Method } from '../../server/http/route-table.ts';
import { blankScenario } from '../../shared/scenario.ts';
import { listen, makeAttempt, makeClass, makeSubmitted, userId, type ClassFixture } from './live-fixtures.ts';
import { anonymousAgent, DEMO_PASSWORD, signIn, startTestApp, type Agent, type TestApp } from './support.ts';

const ACTORS = ['anonymous', 'student', 'otherStudent', 'instructor', 'otherInstructor', 'sharingInstructor', 'admin'] as const;
type Actor = (typeof ACTORS)[number];
/** '2xx' for any success; otherwise the exact status. */
type Outcome = '2xx' | 400 | 401 | 403 | 404 | 409;
type Row = Record<Actor, Outcome>;

const byRole = (emailOf: (p: (typeof DEMO_PEOPLE)[number]) => boolean) => DEMO_PEOPLE.filter(emailOf);
const PEOPLE: Record<Exclude<Actor, 'anonymous'>, string> = {
  // Ada is in the day class (and the fixture class) of the first instructor;
  // Faye is in the evening class of the second instructor, who teaches neither of Ada's.
  student: byRole((p) => p.role === 'student')[0]!.email,
  otherStudent: byRole((p) => p.role === 'student')[5]!.email,
  instructor: byRole((p) => p.role === 'instructor')[0]!.email,
  otherInstructor: byRole((p) => p.role === 'instructor')[1]!.email,
  // Made in beforeAll: teaches a class of its own in which Ada, and every pupil the calls below add, is enrolled too.
  sharingInstructor: 'sharing.instructor@matrix.example',
  admin: byRole((p) => p.role === 'admin')[0]!.email,
};

// Rows used by many routes.
const EVERYONE: Row = { anonymous: '2xx', student: '2xx', otherStudent: '2xx', instructor: '2xx', otherInstructor: '2xx', sharingInstructor: '2xx', admin: '2xx' };
const SIGNED_IN: Row = { ...EVERYONE, anonymous: 401 };
const ADMIN_ONLY: Row = { anonymous: 401, student: 403, otherStudent: 403, instructor: 403, otherInstructor: 403, sharingInstructor: 403, admin: '2xx' };
const ANY_STAFF: Row = { anonymous: 401, student: 403, otherStudent: 403, instructor: '2xx', otherInstructor: '2xx', sharingInstructor: '2xx', admin: '2xx' };
/** The class's instructors and admins; another instructor is refused, even one who teaches the student elsewhere. */
const CLASS_STAFF: Row = { anonymous: 401, student: 403, otherStudent: 403, instructor: '2xx', otherInstructor: 403, sharingInstructor: 403, admin: '2xx' };
/** The enrolled student and the class's staff. */
const CLASS_MEMBER: Row = { anonymous: 401, student: '2xx', otherStudent: 403, instructor: '2xx', otherInstructor: 403, sharingInstructor: 403, admin: '2xx' };
/** Only the student whose attempt it is. */
const OWNER_ONLY: Row = { anonymous: 401, student: '2xx', otherStudent: 403, instructor: 403, otherInstructor: 403, sharingInstructor: 403, admin: 403 };
/** A student's own list: each student gets their own. */
const ANY_STUDENT: Row = { anonymous: 401, student: '2xx', otherStudent: '2xx', instructor: 403, otherInstructor: 403, sharingInstructor: 403, admin: 403 };
/** An instructor's private scenario: another instructor is told it does not exist. */
const PRIVATE_SCENARIO: Row = { anonymous: 401, student: 403, otherStudent: 403, instructor: '2xx', otherInstructor: 404, sharingInstructor: 404, admin: '2xx' };

/** A deep-linking request made by the first instructor's launch. */
const DEEP_LINK_OWNER: Row = { anonymous: 401, student: 403, otherStudent: 403, instructor: '2xx', otherInstructor: 404, sharingInstructor: 404, admin: 404 };
/** A public route called without what it needs: a 400 page for everyone. */
const EVERYONE_REFUSED: Row = { anonymous: 400, student: 400, otherStudent: 400, instructor: 400, otherInstructor: 400, sharingInstructor: 400, admin: 400 };

/** The expected answer of every route for every actor. */
const EXPECTED: Record<string, Row> = {
  'GET /api/auth/me': EVERYONE,
  'POST /api/auth/sign-in': EVERYONE,
  'POST /api/auth/sign-out': EVERYONE,
  'POST /api/auth/password-reset': EVERYONE,
  // Without a valid e-mailed token nobody can set a password.
  'POST /api/auth/set-password': { anonymous: 400, student: 400, otherStudent: 400, instructor: 400, otherInstructor: 400, sharingInstructor: 400, admin: 400 },

  'GET /api/users': ADMIN_ONLY,
  'POST /api/users': ADMIN_ONLY,
  'PATCH /api/users/:id': ADMIN_ONLY,
  'POST /api/users/:id/invite': ADMIN_ONLY,
  'GET /api/outbox': ADMIN_ONLY,

  'GET /api/scenarios': ANY_STAFF,
  'GET /api/scenarios/practice': SIGNED_IN,
  'POST /api/scenarios': ANY_STAFF,
  'POST /api/scenarios/import': ANY_STAFF,
  'GET /api/scenarios/:id': PRIVATE_SCENARIO,
  'GET /api/scenarios/:id/versions/:versionId': PRIVATE_SCENARIO,
  'PUT /api/scenarios/:id': PRIVATE_SCENARIO,
  'PATCH /api/scenarios/:id': PRIVATE_SCENARIO,
  'POST /api/scenarios/:id/publish': PRIVATE_SCENARIO,
  'POST /api/scenarios/:id/restore': PRIVATE_SCENARIO,
  'POST /api/scenarios/:id/duplicate': PRIVATE_SCENARIO,
  'GET /api/scenarios/:id/export': PRIVATE_SCENARIO,

  'GET /api/classes': SIGNED_IN,
  'GET /api/classes/:id': CLASS_STAFF,
  'POST /api/classes': ANY_STAFF,
  'POST /api/classes/:id/students': CLASS_STAFF,
  'DELETE /api/classes/:id/students/:userId': CLASS_STAFF,
  'POST /api/classes/:id/students/:userId/invite': CLASS_STAFF,
  'POST /api/classes/:id/roster/preview': CLASS_STAFF,
  'POST /api/classes/:id/roster': CLASS_STAFF,

  'GET /api/assignments': CLASS_STAFF,
  'GET /api/assignments/mine': ANY_STUDENT,
  'POST /api/assignments': CLASS_STAFF,
  'GET /api/assignments/:id': CLASS_MEMBER,
  'DELETE /api/assignments/:id': CLASS_STAFF,
  'PATCH /api/assignments/:id': CLASS_STAFF,
  'GET /api/assignments/:id/students': CLASS_STAFF,
  'PUT /api/assignments/:id/extensions/:userId': CLASS_STAFF,
  'DELETE /api/assignments/:id/extensions/:userId': CLASS_STAFF,

  // Only an enrolled student starts an attempt; staff are refused by role.
  'POST /api/attempts': OWNER_ONLY,
  'GET /api/attempts/mine': ANY_STUDENT,
  'GET /api/attempts/:id': CLASS_MEMBER,
  'POST /api/attempts/:id/events': OWNER_ONLY,
  'POST /api/attempts/:id/clock': OWNER_ONLY,
  'POST /api/attempts/:id/submit': OWNER_ONLY,

  'GET /api/compare/assignments/:id': CLASS_MEMBER,
  'GET /api/compare/assignments/:id/grades.csv': CLASS_STAFF,

  'GET /api/live/classes/:classId/board': CLASS_STAFF,
  'GET /api/live/classes/:classId/stream': CLASS_STAFF,
  'GET /api/live/attempts/:id/injections': CLASS_STAFF,
  'POST /api/live/attempts/:id/inject': CLASS_STAFF,
  'POST /api/live/attempts/:id/clear': CLASS_STAFF,
  'GET /api/live/attempts/:id/stream': OWNER_ONLY,

  'GET /api/replay/attempts/:id': CLASS_MEMBER,
  'GET /api/replay/attempts/:id/comments': CLASS_MEMBER,
  'POST /api/replay/attempts/:id/comments': CLASS_STAFF,

  'GET /api/sign-offs/me': ANY_STUDENT,
  // An instructor of any of the student's classes reads their progress (with only that class's work in it: security-reach.test.ts).
  'GET /api/sign-offs/students/:userId': { ...CLASS_MEMBER, sharingInstructor: '2xx' },
  'POST /api/sign-offs': CLASS_STAFF,
  // The sign-off's author (the class's instructor) or an admin; an instructor who also teaches the pupil cannot withdraw it.
  'DELETE /api/sign-offs/:id': CLASS_STAFF,
  'GET /api/sign-offs/classes/:classId/sign-offs.csv': CLASS_STAFF,

  'GET /api/lti/tool': ADMIN_ONLY,
  'POST /api/lti/keys/rotate': ADMIN_ONLY,
  'GET /api/lti/platforms': ADMIN_ONLY,
  'POST /api/lti/platforms': ADMIN_ONLY,
  'PUT /api/lti/platforms/:id': ADMIN_ONLY,
  'DELETE /api/lti/platforms/:id': ADMIN_ONLY,
  // Only the instructor whose launch made a deep-linking request sees it; to anyone else it does not exist.
  'GET /api/lti/deep-links/:id': DEEP_LINK_OWNER,
  'POST /api/lti/deep-links/:id': DEEP_LINK_OWNER,
  'GET /api/lti/assignments/:id/grades': CLASS_STAFF,
  'POST /api/lti/scores/:id/resend': CLASS_STAFF,
  'GET /api/lti/classes/:id': CLASS_STAFF,
  // The fixture class is not linked to a platform: those allowed in are told so.
  'POST /api/lti/classes/:id/roster-sync': { ...CLASS_STAFF, instructor: 409, admin: 409 },
  // What a platform's browser reaches: public, and without the launch's parameters refused (a page for a browser, JSON here).
  'GET /lti/login': EVERYONE_REFUSED,
  'POST /lti/login': EVERYONE_REFUSED,
  'POST /lti/launch': EVERYONE_REFUSED,
  'POST /lti/deep-linking': EVERYONE_REFUSED,
  'GET /lti/enter': EVERYONE_REFUSED,
  'GET /lti/entered': EVERYONE_REFUSED,
  'GET /lti/jwks.json': EVERYONE,
  'GET /lti/page.css': EVERYONE,
};

interface Fixtures {
  fx: ClassFixture;
  /** The sharing instructor's class, with Ada in it. */
  sharedClassId: number;
  studentId: number;
  sharedScenarioId: number;
  privateScenarioId: number;
  privateVersionId: number;
  attemptId: number;
  submittedId: number;
  invitee: number;
  throwawayUser: number;
  platformId: number;
  scoreId: number;
}

interface Call {
  path: string;
  body?: unknown;
  /** A multipart upload in the `file` field. */
  file?: { name: string; content: string };
  /** Server-Sent Events: only the status of the response is read. */
  sse?: true;
  /** Sent on a fresh anonymous client. */
  ownAgent?: true;
  /** The answer carries the session's new CSRF token, which the actor's client then sends. */
  renewsCsrf?: true;
}

let t: TestApp;
let f: Fixtures;
let server: { url: string; close(): Promise<void> };
const agents = {} as Record<Actor, Agent>;
const cookies = {} as Record<Actor, string>;
let counter = 0;
const unique = (what: string) => `${what}.${Date.now().toString(36)}.${++counter}@matrix.example`;

async function agentFor(actor: Actor): Promise<Agent> {
  return actor === 'anonymous' ? anonymousAgent(t.app) : signIn(t.app, PEOPLE[actor]);
}

/** A pupil of the fixture class who is also in the sharing instructor's class. */
async function newStudentInClass(): Promise<number> {
  const [u] = await t.ctx.db.insert(users).values({ email: unique('pupil'), name: 'Orrin Matrixfield', role: 'student' }).returning({ id: users.id });
  await t.ctx.db.insert(enrollments).values([
    { classId: f.fx.classId, userId: u!.id },
    { classId: f.sharedClassId, userId: u!.id },
  ]);
  return u!.id;
}

const submitBody = { atMs: 0, readings: [], diagnosis: { verdicts: [], faultKind: 'none', notes: '' } };

/** How each route is called: the ids are the fixtures'; routes that use a thing up get a fresh one per call. */
const CALLS: Record<string, (actor: Actor) => Call | Promise<Call>> = {
  'GET /api/auth/me': () => ({ path: '/api/auth/me' }),
  // Signed-in actors sign in again as themselves (a fresh session id); anonymous signs in as the student on a client of its own.
  'POST /api/auth/sign-in': (actor) =>
    actor === 'anonymous'
      ? { path: '/api/auth/sign-in', body: { email: PEOPLE.student, password: DEMO_PASSWORD }, ownAgent: true }
      : { path: '/api/auth/sign-in', body: { email: PEOPLE[actor], password: DEMO_PASSWORD }, renewsCsrf: true },
  'POST /api/auth/sign-out': () => ({ path: '/api/auth/sign-out' }),
  'POST /api/auth/password-reset': () => ({ path: '/api/auth/password-reset', body: { email: 'nobody.here@matrix.example' } }),
  'POST /api/auth/set-password': () => ({ path: '/api/auth/set-password', body: { token: 'x'.repeat(43), password: 'a-long-enough-password-1' } }),

  'GET /api/users': () => ({ path: '/api/users' }),
  'POST /api/users': () => ({ path: '/api/users', body: { email: unique('made'), name: 'Pell Matrixby', role: 'student' } }),
  'PATCH /api/users/:id': () => ({ path: `/api/users/${f.throwawayUser}`, body: { name: 'Quill Renamed' } }),
  'POST /api/users/:id/invite': () => ({ path: `/api/users/${f.throwawayUser}/invite` }),
  'GET /api/outbox': () => ({ path: '/api/outbox' }),

  'GET /api/scenarios': () => ({ path: '/api/scenarios' }),
  'GET /api/scenarios/practice': () => ({ path: '/api/scenarios/practice' }),
  'POST /api/scenarios': () => ({ path: '/api/scenarios', body: { definition: blankScenario(), visibility: 'private' } }),
  'POST /api/scenarios/import': () => ({ path: '/api/scenarios/import', body: blankScenario() }),
  'GET /api/scenarios/:id': () => ({ path: `/api/scenarios/${f.privateScenarioId}` }),
  'GET /api/scenarios/:id/versions/:versionId': () => ({ path: `/api/scenarios/${f.privateScenarioId}/versions/${f.privateVersionId}` }),
  'PUT /api/scenarios/:id': () => ({ path: `/api/scenarios/${f.privateScenarioId}`, body: { definition: blankScenario(), note: 'Matrix edit' } }),
  'PATCH /api/scenarios/:id': () => ({ path: `/api/scenarios/${f.privateScenarioId}`, body: { archived: false } }),
  'POST /api/scenarios/:id/publish': () => ({ path: `/api/scenarios/${f.privateScenarioId}/publish`, body: { versionId: f.privateVersionId } }),
  'POST /api/scenarios/:id/restore': () => ({ path: `/api/scenarios/${f.privateScenarioId}/restore`, body: { versionId: f.privateVersionId } }),
  'POST /api/scenarios/:id/duplicate': () => ({ path: `/api/scenarios/${f.privateScenarioId}/duplicate`, body: {} }),
  'GET /api/scenarios/:id/export': () => ({ path: `/api/scenarios/${f.privateScenarioId}/export` }),

  'GET /api/classes': () => ({ path: '/api/classes' }),
  'GET /api/classes/:id': () => ({ path: `/api/classes/${f.fx.classId}` }),
  'POST /api/classes': () => ({ path: '/api/classes', body: { name: 'Matrix section', term: 'Spring' } }),
  'POST /api/classes/:id/students': () => ({ path: `/api/classes/${f.fx.classId}/students`, body: { email: unique('added'), name: 'Rhea Matrixton' } }),
  'DELETE /api/classes/:id/students/:userId': async () => ({ path: `/api/classes/${f.fx.classId}/students/${await newStudentInClass()}` }),
  'POST /api/classes/:id/students/:userId/invite': () => ({ path: `/api/classes/${f.fx.classId}/students/${f.invitee}/invite` }),
  'POST /api/classes/:id/roster/preview': () => ({
    path: `/api/classes/${f.fx.classId}/roster/preview`,
    file: { name: 'roster.csv', content: `name,email\nSable Rosterly,${unique('csv')}\n` },
  }),
  'POST /api/classes/:id/roster': () => ({
    path: `/api/classes/${f.fx.classId}/roster`,
    file: { name: 'roster.csv', content: `name,email\nTeague Rosterly,${unique('csv')}\n` },
  }),

  'GET /api/assignments': () => ({ path: `/api/assignments?classId=${f.fx.classId}` }),
  'GET /api/assignments/mine': () => ({ path: '/api/assignments/mine' }),
  'POST /api/assignments': () => ({
    path: '/api/assignments',
    body: {
      classId: f.fx.classId,
      scenarioId: f.sharedScenarioId,
      opensAt: new Date(Date.now() - 3_600_000).toISOString(),
      dueAt: new Date(Date.now() + 86_400_000).toISOString(),
      attemptsAllowed: 2,
    },
  }),
  'GET /api/assignments/:id': () => ({ path: `/api/assignments/${f.fx.assignmentId}` }),
  'PATCH /api/assignments/:id': () => ({ path: `/api/assignments/${f.fx.assignmentId}`, body: { attemptsAllowed: 4 } }),
  'GET /api/assignments/:id/students': () => ({ path: `/api/assignments/${f.fx.assignmentId}/students` }),
  'PUT /api/assignments/:id/extensions/:userId': () => ({ path: `/api/assignments/${f.fx.assignmentId}/extensions/${f.studentId}`, body: { dueAt: null, extraAttempts: 1 } }),
  'DELETE /api/assignments/:id/extensions/:userId': () => ({ path: `/api/assignments/${f.fx.assignmentId}/extensions/${f.studentId}` }),
  'DELETE /api/assignments/:id': async () => {
    const [row] = await t.ctx.db
      .insert(assignments)
      .values({ classId: f.fx.classId, scenarioVersionId: f.fx.scenarioVersionId, title: 'Matrix throwaway', opensAt: new Date(), dueAt: new Date(Date.now() + 86_400_000), createdBy: f.fx.instructorId })
      .returning({ id: assignments.id });
    return { path: `/api/assignments/${row!.id}` };
  },

  'POST /api/attempts': () => ({ path: '/api/attempts', body: { assignmentId: f.fx.assignmentId } }),
  'GET /api/attempts/mine': () => ({ path: '/api/attempts/mine' }),
  'GET /api/attempts/:id': () => ({ path: `/api/attempts/${f.attemptId}` }),
  'POST /api/attempts/:id/events': () => ({ path: `/api/attempts/${f.attemptId}/events`, body: { events: [{ seq: 1, event: { kind: 'key', atMs: 0, position: 'on' } }] } }),
  'POST /api/attempts/:id/clock': () => ({ path: `/api/attempts/${f.attemptId}/clock`, body: { simTimeMs: 1000 } }),
  'POST /api/attempts/:id/submit': async () => ({ path: `/api/attempts/${await makeAttempt(t.ctx.db, f.fx, f.studentId)}/submit`, body: submitBody }),

  'GET /api/compare/assignments/:id': () => ({ path: `/api/compare/assignments/${f.fx.assignmentId}` }),
  'GET /api/compare/assignments/:id/grades.csv': () => ({ path: `/api/compare/assignments/${f.fx.assignmentId}/grades.csv` }),

  'GET /api/live/classes/:classId/board': () => ({ path: `/api/live/classes/${f.fx.classId}/board` }),
  'GET /api/live/classes/:classId/stream': () => ({ path: `/api/live/classes/${f.fx.classId}/stream`, sse: true }),
  'GET /api/live/attempts/:id/injections': () => ({ path: `/api/live/attempts/${f.attemptId}/injections` }),
  'POST /api/live/attempts/:id/inject': async () => ({ path: `/api/live/attempts/${await makeAttempt(t.ctx.db, f.fx, f.studentId)}/inject`, body: { kind: 'diode-open', severity01: 0.5 } }),
  'POST /api/live/attempts/:id/clear': async () => {
    const attemptId = await makeAttempt(t.ctx.db, f.fx, f.studentId);
    const injected = await agents.instructor.post(`/api/live/attempts/${attemptId}/inject`).send({ kind: 'diode-open', severity01: 0.5 });
    if (injected.status !== 201) throw new Error(`fixture injection answered ${injected.status}`);
    return { path: `/api/live/attempts/${attemptId}/clear`, body: { injectionId: injected.body.injection.injectionId } };
  },
  'GET /api/live/attempts/:id/stream': () => ({ path: `/api/live/attempts/${f.attemptId}/stream`, sse: true }),

  'GET /api/replay/attempts/:id': () => ({ path: `/api/replay/attempts/${f.submittedId}` }),
  'GET /api/replay/attempts/:id/comments': () => ({ path: `/api/replay/attempts/${f.submittedId}/comments` }),
  'POST /api/replay/attempts/:id/comments': () => ({ path: `/api/replay/attempts/${f.submittedId}/comments`, body: { simTimeMs: 0, body: 'Look at the clamp arrow here.' } }),

  'GET /api/sign-offs/me': () => ({ path: '/api/sign-offs/me' }),
  'GET /api/sign-offs/students/:userId': () => ({ path: `/api/sign-offs/students/${f.studentId}` }),
  'POST /api/sign-offs': async () => {
    const pupil = await newStudentInClass();
    const attemptId = await makeSubmitted(t.ctx.db, f.fx, pupil, { timeToDiagnosisMs: 60_000, given: 'diode-open', grade: 90 });
    return { path: '/api/sign-offs', body: { attemptId, competency: 'output', note: 'Clean output test' } };
  },
  'DELETE /api/sign-offs/:id': async () => {
    const pupil = await newStudentInClass();
    const [row] = await t.ctx.db.insert(signOffs).values({ userId: pupil, competency: 'output', signedBy: f.fx.instructorId, note: '' }).returning({ id: signOffs.id });
    return { path: `/api/sign-offs/${row!.id}` };
  },
  'GET /api/sign-offs/classes/:classId/sign-offs.csv': () => ({ path: `/api/sign-offs/classes/${f.fx.classId}/sign-offs.csv` }),

  'GET /api/lti/tool': () => ({ path: '/api/lti/tool' }),
  'POST /api/lti/keys/rotate': () => ({ path: '/api/lti/keys/rotate' }),
  'GET /api/lti/platforms': () => ({ path: '/api/lti/platforms' }),
  'POST /api/lti/platforms': () => ({ path: '/api/lti/platforms', body: platformBody(unique('client')) }),
  'PUT /api/lti/platforms/:id': () => ({ path: `/api/lti/platforms/${f.platformId}`, body: platformBody('matrix-client') }),
  'DELETE /api/lti/platforms/:id': async () => {
    const [row] = await t.ctx.db.insert(ltiPlatforms).values({ ...platformFields(unique('gone')) }).returning({ id: ltiPlatforms.id });
    return { path: `/api/lti/platforms/${row!.id}` };
  },
  'GET /api/lti/deep-links/:id': async () => ({ path: `/api/lti/deep-links/${await deepLinkRequest()}` }),
  'POST /api/lti/deep-links/:id': async () => ({
    path: `/api/lti/deep-links/${await deepLinkRequest()}`,
    body: { scenarioId: f.sharedScenarioId, opensAt: new Date(Date.now() - 3_600_000).toISOString(), dueAt: new Date(Date.now() + 86_400_000).toISOString(), attemptsAllowed: 2 },
  }),
  'GET /api/lti/assignments/:id/grades': () => ({ path: `/api/lti/assignments/${f.fx.assignmentId}/grades` }),
  'POST /api/lti/scores/:id/resend': () => ({ path: `/api/lti/scores/${f.scoreId}/resend` }),
  'GET /api/lti/classes/:id': () => ({ path: `/api/lti/classes/${f.fx.classId}` }),
  'POST /api/lti/classes/:id/roster-sync': () => ({ path: `/api/lti/classes/${f.fx.classId}/roster-sync` }),
  'GET /lti/login': () => ({ path: '/lti/login' }),
  'POST /lti/login': () => ({ path: '/lti/login', body: {} }),
  'POST /lti/launch': () => ({ path: '/lti/launch', body: {} }),
  'POST /lti/deep-linking': () => ({ path: '/lti/deep-linking', body: {} }),
  'GET /lti/enter': () => ({ path: '/lti/enter?token=not-a-token' }),
  'GET /lti/entered': () => ({ path: '/lti/entered?fallback=not-a-token' }),
  'GET /lti/jwks.json': () => ({ path: '/lti/jwks.json' }),
  'GET /lti/page.css': () => ({ path: '/lti/page.css' }),
};

function platformFields(clientId: string) {
  return { name: 'Matrix platform', issuer: 'https://platform.matrix.example', clientId, authUrl: 'https://platform.matrix.example/auth', tokenUrl: 'https://platform.matrix.example/token', jwksUrl: 'https://platform.matrix.example/jwks' };
}
const platformBody = (clientId: string) => ({ ...platformFields(clientId), deploymentIds: ['matrix-deployment'] });

/** A fresh deep-linking request of the first instructor, in the fixture class. */
async function deepLinkRequest(): Promise<string> {
  const id = `matrix-request-${Date.now().toString(36)}-${++counter}`;
  await t.ctx.db.insert(ltiDeepLinkRequests).values({
    id,
    userId: f.fx.instructorId,
    platformId: f.platformId,
    deploymentId: 'matrix-deployment',
    contextId: 'matrix-course',
    classId: f.fx.classId,
    returnUrl: 'https://platform.matrix.example/deep-link-return',
    expiresAt: new Date(Date.now() + 3_600_000),
  });
  return id;
}

const keyOf = (r: { method: Method; path: string }) => `${r.method.toUpperCase()} ${r.path}`;

async function send(actor: Actor, method: Method, call: Call): Promise<{ status: number; text: string }> {
  if (call.sse) {
    const abort = new AbortController();
    const res = await fetch(`${server.url}${call.path}`, { headers: { Cookie: cookies[actor], Accept: 'text/event-stream' }, signal: abort.signal });
    const text = res.headers.get('content-type')?.includes('json') ? await res.text() : '';
    abort.abort();
    return { status: res.status, text };
  }
  const agent = call.ownAgent ? await anonymousAgent(t.app) : agents[actor];
  let req = agent[method](call.path);
  if (call.file) req = req.attach('file', Buffer.from(call.file.content), { filename: call.file.name, contentType: 'text/csv' });
  else if (call.body !== undefined) req = req.send(call.body as object);
  const res = await req;
  if (call.renewsCsrf && res.status === 200) {
    agent.csrf = res.body.csrfToken as string;
    agent.set('X-CSRF-Token', agent.csrf);
  }
  return { status: res.status, text: res.text ?? '' };
}

const matches = (want: Outcome, status: number) => (want === '2xx' ? status >= 200 && status < 300 : status === want);

beforeAll(async () => {
  t = await startTestApp();
  server = await listen(t);
  await t.ctx.db.insert(users).values({ email: PEOPLE.sharingInstructor, name: 'Sable Sharington', role: 'instructor', passwordHash: await hashPassword(DEMO_PASSWORD) });
  for (const actor of ACTORS) {
    agents[actor] = await agentFor(actor);
    cookies[actor] = (await agents[actor].get('/api/auth/me')).request.cookies;
  }
  const db = t.ctx.db;
  const studentId = await userId(db, PEOPLE.student);
  // makeClass enrols the first demo student (the matrix's student) in a class of the first instructor.
  const fx = await makeClass(db, { students: 1, name: 'Matrix section' });
  await db.update(assignments).set({ attemptsAllowed: 20 }).where(eq(assignments.id, fx.assignmentId));
  const created = await agents.instructor.post('/api/scenarios').send({ definition: { ...blankScenario(), title: 'Matrix private bench' }, visibility: 'private' });
  expect(created.status).toBe(201);
  const attemptId = await makeAttempt(db, fx, studentId);
  const submittedId = await makeSubmitted(db, fx, studentId, { timeToDiagnosisMs: 120_000, given: 'diode-open', grade: 85 });
  const [invitee] = await db.insert(users).values({ email: unique('invitee'), name: 'Sorrel Uninvited', role: 'student' }).returning({ id: users.id });
  await db.insert(enrollments).values({ classId: fx.classId, userId: invitee!.id });
  const [throwaway] = await db.insert(users).values({ email: unique('throwaway'), name: 'Quill Matrixby', role: 'student' }).returning({ id: users.id });
  const [shared] = await db.insert(classes).values({ name: 'Matrix sharing section', term: 'Spring' }).returning({ id: classes.id });
  await db.insert(classInstructors).values({ classId: shared!.id, userId: await userId(db, PEOPLE.sharingInstructor) });
  await db.insert(enrollments).values({ classId: shared!.id, userId: studentId });
  const assignment = await agents.instructor.get(`/api/assignments/${fx.assignmentId}`).expect(200);
  const [platform] = await db.insert(ltiPlatforms).values(platformFields('matrix-client')).returning({ id: ltiPlatforms.id });
  const [score] = await db
    .insert(ltiScoreOutbox)
    .values({ attemptId: submittedId, platformId: platform!.id, lineitemUrl: 'https://platform.matrix.example/lineitems/1', payload: { userId: 'matrix-subject', scoreGiven: 85 }, status: 'failed', lastError: 'Score: the platform answered 404' })
    .returning({ id: ltiScoreOutbox.id });
  f = {
    fx,
    sharedClassId: shared!.id,
    studentId,
    sharedScenarioId: assignment.body.assignment.scenarioId as number,
    privateScenarioId: created.body.id as number,
    privateVersionId: created.body.latestVersionId as number,
    attemptId,
    submittedId,
    invitee: invitee!.id,
    throwawayUser: throwaway!.id,
    platformId: platform!.id,
    scoreId: score!.id,
  };
});

afterAll(async () => {
  await server?.close();
  await t?.close();
});

describe('the authorisation matrix', () => {
  it('has an entry, and a way to call it, for every route in the table and for no other', () => {
    const keys = t.routes.map(keyOf);
    expect(keys.length).toBeGreaterThan(40);
    const missing = keys.filter((k) => !(k in EXPECTED));
    expect(missing, 'new route without an entry in EXPECTED').toEqual([]);
    const stale = Object.keys(EXPECTED).filter((k) => !keys.includes(k));
    expect(stale, 'entry in EXPECTED for a route that no longer exists').toEqual([]);
    expect(keys.filter((k) => !(k in CALLS)), 'route without a call in CALLS').toEqual([]);
    for (const route of t.routes) {
      const row = EXPECTED[keyOf(route)]!;
      // The table's coarse rule agrees with the matrix: nobody the role guard refuses is expected to succeed.
      if (route.access !== 'public') expect(row.anonymous, keyOf(route)).toBe(401);
    }
  });

  // One test per route, in an order where routes that use a thing up (with a
  // fresh one per call) come late, then sign-in (which replaces each actor's
  // session) and sign-out last.
  const rank = (k: string) => (k.endsWith('/sign-out') ? 3 : k.endsWith('/sign-in') ? 2 : /^DELETE|submit$/.test(k) ? 1 : 0);
  const ordered = Object.keys(EXPECTED).sort((a, b) => rank(a) - rank(b));
  it.each(ordered)('%s answers each actor as expected (no unexpected 2xx)', async (key) => {
    const route = t.routes.find((r) => keyOf(r) === key);
    expect(route, `${key} is in the route table`).toBeDefined();
    const row = EXPECTED[key]!;
    const call = CALLS[key]!;
    const failures: string[] = [];
    // The six actors call the route at once, each on their own session.
    await Promise.all(
      ACTORS.map(async (actor) => {
        const res = await send(actor, route!.method, await call(actor));
        if (!matches(row[actor], res.status)) failures.push(`${actor}: expected ${row[actor]}, got ${res.status} ${res.text.slice(0, 160)}`);
        if (res.status >= 400 && res.status < 500 && res.text) {
          const body = JSON.parse(res.text) as { error?: { message?: unknown } };
          if (typeof body.error?.message !== 'string') failures.push(`${actor}: ${res.status} without error.message`);
        }
      }),
    );
    expect(failures).toEqual([]);
  });
});
