/**
 * LTI Advantage against the local platform: deep linking makes an
 * assignment and a line item; a learner's graded attempt reaches the
 * platform's gradebook through the outbox, also after the platform was down;
 * the instructor sees each grade's state and resends; the class syncs its
 * members from the platform, all or nothing.
 */
import { and, eq, ne } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { demoFirst } from '../../server/db/demo-people.ts';
import { assignments, classes, classInstructors, enrollments, scenarios } from '../../server/db/schema.ts';
import { ROLE } from '../../server/lti/local-platform.ts';
import { resolveLineItems, sendDueScores } from '../../server/lti/scores.ts';
import { ltiContexts, ltiMemberships, ltiScoreOutbox } from '../../server/lti/tables.ts';
import { launch, whoIs, type FormClient, type LtiHarness, startLtiHarness } from './lti-support.ts';
import { signIn } from './support.ts';

let h: LtiHarness;
let assignmentId: number;
let classId: number;
let instructor: FormClient;

/** The client's CSRF token, for its unsafe API calls. */
async function csrf(client: FormClient): Promise<string> {
  const me = await client.send(`${h.tool.url}/api/auth/me`);
  return ((await me.json()) as { csrfToken: string }).csrfToken;
}

async function api(client: FormClient, method: string, path: string, body?: unknown): Promise<{ status: number; body: Record<string, unknown> }> {
  const headers: Record<string, string> = { Accept: 'application/json' };
  if (method !== 'GET') headers['X-CSRF-Token'] = await csrf(client);
  const cookie = [...client.cookies].map(([k, v]) => `${k}=${v}`).join('; ');
  if (cookie) headers.Cookie = cookie;
  if (body !== undefined) headers['Content-Type'] = 'application/json';
  const res = await fetch(`${h.tool.url}${path}`, { method, headers, body: body === undefined ? undefined : JSON.stringify(body) });
  const text = await res.text();
  return { status: res.status, body: text ? (JSON.parse(text) as Record<string, unknown>) : {} };
}

const send = (ctx = h.t.ctx) => sendDueScores(ctx, { baseMs: 20 });

beforeAll(async () => {
  h = await startLtiHarness({ pageSize: 2 });
});
afterAll(async () => {
  await h?.close();
});

describe('deep linking', () => {
  it('lets an instructor pick a scenario, dates and attempts, and answers the platform with a signed resource link and line item', async () => {
    const started = await launch(h, { user: 'qm-teacher-ilse', deepLink: true });
    instructor = started.client;
    expect(started.landed).toMatch(/^\/deep-link\/[A-Za-z0-9_-]+$/);
    const requestId = started.landed.split('/').pop()!;
    const view = await api(instructor, 'GET', `/api/lti/deep-links/${requestId}`);
    expect(view.status).toBe(200);
    expect(view.body.request).toMatchObject({ platformName: 'Quillmoor', className: h.platform.course.title, acceptsLineItem: true });
    classId = (view.body.request as { classId: number }).classId;

    // Another signed-in person cannot see or answer it.
    const ta = await launch(h, { user: 'qm-ta-osric' });
    expect((await api(ta.client, 'GET', `/api/lti/deep-links/${requestId}`)).status).toBe(404);

    const [scenario] = await h.t.ctx.db.select({ id: scenarios.id }).from(scenarios).where(eq(scenarios.slug, 'healthy-control-corvane-linden'));
    const bad = await api(instructor, 'POST', `/api/lti/deep-links/${requestId}`, { scenarioId: scenario!.id, opensAt: '2026-01-02T00:00:00Z', dueAt: '2026-01-01T00:00:00Z', attemptsAllowed: 2 });
    expect(bad.status).toBe(400);
    expect((bad.body.error as { field: string }).field).toBe('dueAt');

    const opensAt = new Date(Date.now() - 3600_000).toISOString();
    const dueAt = new Date(Date.now() + 7 * 86400_000).toISOString();
    const answer = await api(instructor, 'POST', `/api/lti/deep-links/${requestId}`, { scenarioId: scenario!.id, title: 'Output test: Linden', opensAt, dueAt, attemptsAllowed: 3 });
    expect(answer.status).toBe(201);
    assignmentId = answer.body.assignmentId as number;
    const [made] = await h.t.ctx.db.select().from(assignments).where(eq(assignments.id, assignmentId));
    expect(made).toMatchObject({ classId, title: 'Output test: Linden', attemptsAllowed: 3 });
    expect(answer.body.returnUrl).toBe(`${h.platform.url}/deep-link-return`);

    // The browser posts the JWT to the platform, which checks its signature against Loadline's key set.
    const back = await fetch(answer.body.returnUrl as string, { method: 'POST', headers: { 'Content-Type': 'application/x-www-form-urlencoded' }, body: new URLSearchParams({ JWT: answer.body.jwt as string }) });
    expect(back.status, await back.clone().text()).toBe(200);
    const received = h.platform.received.find((r) => r.kind === 'deep-link')!.detail as { items: Record<string, unknown>[]; data: string | null };
    // 1EdTech Deep Linking 2.0 §3.2: an ltiResourceLink with its custom parameters and a lineItem; §4.5: the data echoed.
    expect(received.items[0]).toMatchObject({
      type: 'ltiResourceLink',
      title: 'Output test: Linden',
      url: `${h.tool.url}/lti/launch`,
      custom: { loadline_assignment_id: String(assignmentId) },
      lineItem: { scoreMaximum: 100, label: 'Output test: Linden' },
    });
    expect(received.data).toMatch(/^qm-dl-/);
    const link = [...h.platform.links.values()].at(-1)!;
    expect(link.lineItemId).not.toBeNull();

    // Used once.
    expect((await api(instructor, 'POST', `/api/lti/deep-links/${requestId}`, { scenarioId: scenario!.id, opensAt, dueAt, attemptsAllowed: 3 })).status).toBe(410);
  });

  it('opens the placed link at the bench for a learner and at the comparison for an instructor', async () => {
    const link = [...h.platform.links.values()].at(-1)!;
    const learner = await launch(h, { user: 'qm-learner-wren', link: link.id });
    expect(learner.landed).toBe(`/bench/new?assignmentId=${assignmentId}`);
    const teacher = await launch(h, { user: 'qm-teacher-ilse', link: link.id });
    expect(teacher.landed).toBe(`/assignments/${assignmentId}/compare`);
  });
});

describe('grades back to the platform', () => {
  const submitBody = { atMs: 0, readings: [], diagnosis: { verdicts: [], faultKind: 'none', notes: '' } };

  it('posts a learner’s graded attempt to the line item, retrying while the platform is down, with the comment of the fault named', async () => {
    const link = [...h.platform.links.values()].at(-1)!;
    const { client, landed } = await launch(h, { user: 'qm-learner-wren', link: link.id });
    expect(landed).toBe(`/bench/new?assignmentId=${assignmentId}`);
    const started = await api(client, 'POST', '/api/attempts', { assignmentId });
    expect(started.status).toBe(201);
    const attemptId = (started.body.attempt as { id: number }).id;
    // Launching again while the attempt runs goes back to it.
    expect((await launch(h, { user: 'qm-learner-wren', link: link.id }, client)).landed).toBe(`/bench/${attemptId}`);

    await h.platform.stop();
    const submitted = await api(client, 'POST', `/api/attempts/${attemptId}/submit`, submitBody);
    expect(submitted.status).toBe(200);
    const grade = submitted.body.grade as number;

    // The platform is down: the score waits, with the error and a later try.
    expect(await send()).toBe(0);
    const [waiting] = await h.t.ctx.db.select().from(ltiScoreOutbox).where(eq(ltiScoreOutbox.attemptId, attemptId));
    expect(waiting).toMatchObject({ status: 'pending', tries: 1 });
    expect(waiting!.lastError).toMatch(/could not be reached/);
    expect(waiting!.nextTryAt.getTime()).toBeGreaterThan(Date.now() - 1000);

    const sync = await api(instructor, 'GET', `/api/lti/assignments/${assignmentId}/grades`);
    expect(sync.body).toMatchObject({ linked: true, platformName: 'Quillmoor' });
    expect((sync.body.rows as { status: string; studentName: string }[])[0]).toMatchObject({ status: 'pending', studentName: 'Wren Ashcombe' });

    await h.platform.start();
    await new Promise((r) => setTimeout(r, 60));
    expect(await send()).toBe(1);
    const me = await whoIs(h, client);
    expect(me).not.toBeNull();
    const book = h.platform.gradebook().filter((g) => g.lineItemId === link.lineItemId);
    // 1EdTech Assignment and Grade Services 2.0 §3.4: scoreGiven of scoreMaximum, with a comment.
    expect(book).toEqual([expect.objectContaining({ userId: 'qm-learner-wren', scoreGiven: grade, scoreMaximum: 100 })]);
    expect(book[0]!.comment).toMatch(/^Fault named: No fault: the charging system is healthy \(correct\)/);
    const score = h.platform.received.filter((r) => r.kind === 'score').at(-1)!.detail as { score: Record<string, unknown> };
    expect(score.score).toMatchObject({ activityProgress: 'Completed', gradingProgress: 'FullyGraded' });
    // §3.4: the timestamp in ISO 8601 with sub-second precision.
    expect(score.score.timestamp).toMatch(/^\d{4}-\d\d-\d\dT\d\d:\d\d:\d\d\.\d{3}Z$/);
    // The token request carried a client assertion signed by a key in Loadline's set (Security Framework 1.0 §4.1).
    expect(h.platform.received.some((r) => r.kind === 'token')).toBe(true);

    const [sent] = await h.t.ctx.db.select().from(ltiScoreOutbox).where(eq(ltiScoreOutbox.attemptId, attemptId));
    expect(sent).toMatchObject({ status: 'sent', tries: 2, lastError: null });

    // The instructor resends: the platform gets it again.
    const before = h.platform.received.filter((r) => r.kind === 'score').length;
    const resent = await api(instructor, 'POST', `/api/lti/scores/${sent!.id}/resend`);
    expect(resent.status).toBe(200);
    expect(await send()).toBe(1);
    expect(h.platform.received.filter((r) => r.kind === 'score').length).toBe(before + 1);
    // A student may not.
    expect((await api(client, 'POST', `/api/lti/scores/${sent!.id}/resend`)).status).toBe(403);
  });

  it('finds or makes the line item of a link placed by hand without one, then posts the score there', async () => {
    const manual = h.platform.addLink({ id: 'qm-link-manual', title: 'Loadline (placed by hand)', custom: { loadline_assignment_id: String(assignmentId) } });
    expect(manual.lineItemId).toBeNull();
    // Juno launches the hand-placed link, which names the deep-linked assignment.
    const { client, landed } = await launch(h, { user: 'qm-learner-juno', link: manual.id });
    expect(landed).toBe(`/bench/new?assignmentId=${assignmentId}`);
    const started = await api(client, 'POST', '/api/attempts', { assignmentId });
    const attemptId = (started.body.attempt as { id: number }).id;
    expect((await api(client, 'POST', `/api/attempts/${attemptId}/submit`, submitBody)).status).toBe(200);
    // The deep-linked link's line item gets Juno's score too (she is linked to the assignment through it as well).
    await send();
    expect(await resolveLineItems(h.t.ctx)).toBe(1);
    expect(manual.lineItemId).not.toBeNull();
    expect(h.platform.received.some((r) => r.kind === 'lineitems' && (r.detail as { created?: unknown }).created)).toBe(true);
    // Both links open the same assignment, so the new line item gets Wren's grade as well as Juno's.
    expect(await send()).toBe(2);
    const book = h.platform.gradebook().filter((g) => g.lineItemId === manual.lineItemId);
    expect(book.map((g) => g.userId).sort()).toEqual(['qm-learner-juno', 'qm-learner-wren']);
  });

  it('gives up on a score the platform refuses outright and lets the instructor resend it', async () => {
    const [row] = await h.t.ctx.db.select().from(ltiScoreOutbox).limit(1);
    // A line item the platform does not have: 404, not worth retrying.
    await h.t.ctx.db.update(ltiScoreOutbox).set({ status: 'pending', lineitemUrl: `${h.platform.url}/lineitems/li-gone`, nextTryAt: new Date(0) }).where(eq(ltiScoreOutbox.id, row!.id));
    expect(await send()).toBe(0);
    const [failed] = await h.t.ctx.db.select().from(ltiScoreOutbox).where(eq(ltiScoreOutbox.id, row!.id));
    expect(failed).toMatchObject({ status: 'failed' });
    expect(failed!.lastError).toMatch(/404/);
    const sync = await api(instructor, 'GET', `/api/lti/assignments/${assignmentId}/grades`);
    expect((sync.body.rows as { status: string }[]).some((r) => r.status === 'failed')).toBe(true);
  });
});

describe('the roster from the platform', () => {
  it('adds and updates members, and marks gone those the platform no longer lists', async () => {
    const sync = await api(instructor, 'POST', `/api/lti/classes/${classId}/roster-sync`);
    expect(sync.status, JSON.stringify(sync.body)).toBe(200);
    const added = (sync.body.added as { name: string }[]).map((a) => a.name).sort();
    // Wren, Juno, Ilse and Osric launched before; Milo is new here. The list came in pages of two (Link rel="next").
    expect(added).toEqual(['Milo Ferrant']);
    expect(h.platform.received.filter((r) => r.kind === 'memberships').length).toBeGreaterThanOrEqual(3);
    const link = await api(instructor, 'GET', `/api/lti/classes/${classId}`);
    expect(link.body).toMatchObject({ linked: true, canSync: true, lastSync: { added: 1, gone: 0 } });

    // Milo leaves the course, Juno changes her name.
    const milo = h.platform.people.find((p) => p.id === 'qm-learner-milo')!;
    milo.status = 'Inactive';
    const juno = h.platform.people.find((p) => p.id === 'qm-learner-juno')!;
    juno.name = 'Juno Castellaw-Rhee';
    const again = await api(instructor, 'POST', `/api/lti/classes/${classId}/roster-sync`);
    expect(again.status).toBe(200);
    expect(again.body.gone).toEqual([{ name: 'Milo Ferrant', role: 'student' }]);
    expect(again.body.updated).toEqual([{ name: 'Juno Castellaw-Rhee', role: 'student' }]);
    const rows = await h.t.ctx.db.select().from(ltiMemberships).where(and(eq(ltiMemberships.classId, classId), eq(ltiMemberships.status, 'gone')));
    expect(rows).toHaveLength(1);
    const miloEnrolled = await h.t.ctx.db.select().from(enrollments).where(and(eq(enrollments.classId, classId), eq(enrollments.userId, rows[0]!.userId)));
    expect(miloEnrolled).toHaveLength(0);
    const after = await api(instructor, 'GET', `/api/lti/classes/${classId}`);
    expect((after.body.gone as { name: string }[]).map((g) => g.name)).toEqual(['Milo Ferrant']);
  });

  it('changes nothing when one member cannot be taken, and names them', async () => {
    const milo = h.platform.people.find((p) => p.id === 'qm-learner-milo')!;
    milo.status = 'Active';
    // A new member the platform calls an instructor whose subject is an existing learner's: the account is a student.
    const wren = h.platform.people.find((p) => p.id === 'qm-learner-wren')!;
    wren.roles = [ROLE.instructor];
    const enrolledBefore = await h.t.ctx.db.select().from(enrollments).where(eq(enrollments.classId, classId));
    const teachersBefore = await h.t.ctx.db.select().from(classInstructors).where(eq(classInstructors.classId, classId));
    const res = await api(instructor, 'POST', `/api/lti/classes/${classId}/roster-sync`);
    expect(res.status).toBe(409);
    expect((res.body.error as { message: string }).message).toMatch(/qm-learner-wren.*student account.*nothing was changed/);
    expect(await h.t.ctx.db.select().from(enrollments).where(eq(enrollments.classId, classId))).toEqual(enrolledBefore);
    expect(await h.t.ctx.db.select().from(classInstructors).where(eq(classInstructors.classId, classId))).toEqual(teachersBefore);
    wren.roles = [ROLE.learner];

    // A member without a user_id: refused before anything is read into the class.
    h.platform.people.push({ id: '', name: 'No Id', givenName: 'No', familyName: 'Id', email: '', roles: [ROLE.learner], status: 'Active' });
    const malformed = await api(instructor, 'POST', `/api/lti/classes/${classId}/roster-sync`);
    expect(malformed.status).toBe(422);
    expect((malformed.body.error as { message: string }).message).toMatch(/member 6: user_id is empty; nothing was changed/);
    h.platform.people.pop();
    // Milo is still gone: nothing of the refused syncs was kept.
    const [miloGone] = await h.t.ctx.db.select({ status: ltiMemberships.status }).from(ltiMemberships).innerJoin(ltiContexts, eq(ltiContexts.classId, ltiMemberships.classId)).where(and(eq(ltiMemberships.classId, classId), eq(ltiMemberships.status, 'gone')));
    expect(miloGone).toBeDefined();
  });

  it('says when a class is not linked to a platform', async () => {
    const [demoClass] = await h.t.ctx.db.select({ id: classes.id }).from(classes).where(ne(classes.id, classId)).limit(1);
    const admin = await signIn(h.t.app, demoFirst('admin').email);
    const link = await admin.get(`/api/lti/classes/${demoClass!.id}`).expect(200);
    expect(link.body).toMatchObject({ linked: false, canSync: false });
    const res = await admin.post(`/api/lti/classes/${demoClass!.id}/roster-sync`);
    expect(res.status).toBe(409);
    expect(res.body.error.message).toMatch(/not linked/);
  });
});
