/**
 * Launches from a learning platform (LTI 1.3) against the local platform:
 * registration, the OIDC login, the id_token checks with a page and a log
 * line for each refusal, signing in by platform and subject, the class from
 * the context, the session handoff, and the frame policy.
 */
import { and, eq } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { classes, enrollments, users } from '../../server/db/schema.ts';
import { demoFirst } from '../../server/db/demo-people.ts';
import { CLAIM } from '../../server/lti/claims.ts';
import { ltiAccounts, ltiContexts } from '../../server/lti/tables.ts';
import { FormClient, launch, startLogin, startLtiHarness, whoIs, type LtiHarness } from './lti-support.ts';
import supertest from 'supertest';
import { createHandoff } from '../../server/lti/handoff.ts';
import { signIn, startTestApp } from './support.ts';

let h: LtiHarness;

beforeAll(async () => {
  h = await startLtiHarness();
});
afterAll(async () => {
  await h?.close();
});

/** Posts a crafted id_token with a real state and nonce; answers the status, the page and the log line's reason. */
async function postLaunch(edit: (claims: Record<string, unknown>) => void, opts: { stray?: boolean; expiresInS?: number; issuedAt?: number; user?: string } = {}) {
  const client = new FormClient();
  const { state, nonce } = await startLogin(h, client, { user: opts.user ?? 'qm-learner-wren' });
  const claims = h.platform.launchClaims({ user: opts.user ?? 'qm-learner-wren', nonce }) as Record<string, unknown>;
  edit(claims);
  const idToken = await h.platform.sign(claims, opts);
  const before = h.logs.length;
  const res = await client.send(`${h.tool.url}/lti/launch`, { form: { id_token: idToken, state } });
  const page = await res.text();
  const line = h.logs.slice(before).find((l) => /lti launch refused/.test(l.message));
  return { status: res.status, page, reason: (line?.extra as { reason?: string } | undefined)?.reason ?? null, state, idToken, client };
}

describe('registration', () => {
  it('shows the addresses a platform admin pastes and publishes the key set at a stable address', async () => {
    const admin = await signIn(h.t.app, demoFirst('admin').email);
    const tool = await admin.get('/api/lti/tool').expect(200);
    expect(tool.body.loginUrl).toMatch(/\/lti\/login$/);
    expect(tool.body.redirectUrl).toMatch(/\/lti\/launch$/);
    expect(tool.body.jwksUrl).toMatch(/\/lti\/jwks\.json$/);
    expect(tool.body.deepLinkingUrl).toMatch(/\/lti\/deep-linking$/);
    expect(tool.body.keys.filter((k: { current: boolean }) => k.current)).toHaveLength(1);
    const jwks = await fetch(`${h.tool.url}/lti/jwks.json`);
    const set = (await jwks.json()) as { keys: { kid: string; kty: string; alg: string; use: string; d?: string }[] };
    // 1EdTech Security Framework 1.0 §6: RSA keys published as a JWK Set with their kid; nothing private in it.
    expect(set.keys[0]).toMatchObject({ kid: tool.body.keys[0].kid, kty: 'RSA', alg: 'RS256', use: 'sig' });
    expect(set.keys.some((k) => 'd' in k)).toBe(false);
  });

  it('refuses a registration with a bad field, naming it, and a second one of the same issuer and client id', async () => {
    const admin = await signIn(h.t.app, demoFirst('admin').email);
    const bad = await admin.post('/api/lti/platforms').send({ ...h.platform.registration(), jwksUrl: 'not an address' });
    expect(bad.status).toBe(400);
    expect(bad.body.error.field).toBe('jwksUrl');
    const none = await admin.post('/api/lti/platforms').send({ ...h.platform.registration(), clientId: 'other', deploymentIds: [] });
    expect(none.status).toBe(400);
    expect(none.body.error.field).toBe('deploymentIds');
    const twice = await admin.post('/api/lti/platforms').send(h.platform.registration());
    expect(twice.status).toBe(409);
    const instructor = await signIn(h.t.app, demoFirst('instructor').email);
    await instructor.get('/api/lti/platforms').expect(403);
  });

  it('rotates its key and keeps the old one published until its tokens have expired', async () => {
    const admin = await signIn(h.t.app, demoFirst('admin').email);
    const before = (await admin.get('/api/lti/tool').expect(200)).body.keys as { kid: string }[];
    const rotated = await admin.post('/api/lti/keys/rotate').expect(201);
    const keys = rotated.body.keys as { kid: string; current: boolean; retiredAt: string | null; publishedUntil: string | null }[];
    const current = keys.find((k) => k.current)!;
    const old = keys.find((k) => k.kid === before.find((b) => b)!.kid)!;
    expect(current.kid).not.toBe(old.kid);
    expect(old.retiredAt).not.toBeNull();
    expect(Date.parse(old.publishedUntil!) - Date.parse(old.retiredAt!)).toBe(60 * 60 * 1000);
    const set = (await (await fetch(`${h.tool.url}/lti/jwks.json`)).json()) as { keys: { kid: string }[] };
    expect(set.keys.map((k) => k.kid)).toEqual(expect.arrayContaining([current.kid, old.kid]));
  });
});

describe('a resource-link launch', () => {
  it('makes the learner an account on first launch (by platform and subject), the class from the context, and signs them in', async () => {
    const first = await launch(h, { user: 'qm-learner-wren' });
    // No assignment behind the link yet: the learner lands on their bench page.
    expect(first.landed).toBe('/bench');
    const me = await whoIs(h, first.client);
    expect(me).toMatchObject({ role: 'student', name: 'Wren Ashcombe', email: 'wren.ashcombe@quillmoor.example' });
    const [ctxRow] = await h.t.ctx.db.select().from(ltiContexts).where(eq(ltiContexts.platformId, h.platformId));
    const [cls] = await h.t.ctx.db.select().from(classes).where(eq(classes.id, ctxRow!.classId));
    expect(cls!.name).toBe(h.platform.course.title);
    const enrolled = await h.t.ctx.db.select().from(enrollments).where(and(eq(enrollments.classId, cls!.id), eq(enrollments.userId, me!.id)));
    expect(enrolled).toHaveLength(1);

    // The second launch finds the same account and class.
    const second = await launch(h, { user: 'qm-learner-wren' });
    expect((await whoIs(h, second.client))!.id).toBe(me!.id);
    expect(await h.t.ctx.db.select().from(ltiContexts).where(eq(ltiContexts.platformId, h.platformId))).toHaveLength(1);
  });

  it('never signs in by e-mail: a platform person with a demo account’s e-mail gets an account of their own', async () => {
    const demo = demoFirst('student');
    h.platform.people.push({ id: 'qm-learner-lookalike', name: 'Ada Lookalike', givenName: 'Ada', familyName: 'Lookalike', email: demo.email, roles: ['http://purl.imsglobal.org/vocab/lis/v2/membership#Learner'], status: 'Active' });
    const { client } = await launch(h, { user: 'qm-learner-lookalike' });
    const me = await whoIs(h, client);
    const [demoRow] = await h.t.ctx.db.select({ id: users.id }).from(users).where(eq(users.email, demo.email));
    expect(me!.id).not.toBe(demoRow!.id);
    expect(me!.email).not.toBe(demo.email);
    expect(me!.email).toMatch(/@lti\.loadline\.invalid$/);
  });

  it('maps Instructor and TeachingAssistant to instructors who teach the class, and regenerates the session at sign-in', async () => {
    const client = new FormClient();
    // A session from before the launch (signed out): it must not survive the sign-in.
    await client.send(`${h.tool.url}/api/auth/me`);
    const before = client.cookies.get('loadline.sid');
    const { landed } = await launch(h, { user: 'qm-teacher-ilse' }, client);
    expect(landed).toMatch(/^\/classes\/\d+$/);
    expect(client.cookies.get('loadline.sid')).not.toBe(before);
    expect(await whoIs(h, client)).toMatchObject({ role: 'instructor', name: 'Ilse Varnholt' });
    const ta = await launch(h, { user: 'qm-ta-osric' });
    expect(await whoIs(h, ta.client)).toMatchObject({ role: 'instructor' });
    const classId = Number(landed.split('/').pop());
    const page = await ta.client.send(`${h.tool.url}/api/classes/${classId}`);
    expect(page.status).toBe(200);
  });

  it('hands the session over once: the sign-in link cannot be used again, and a browser that kept the cookie out is offered a new window', async () => {
    const client = new FormClient();
    const auth = await client.follow(h.platform.launchUrl({ user: 'qm-learner-milo' }));
    const html = await auth.res.text();
    const idToken = /name="id_token" value="([^"]+)"/.exec(html)![1]!;
    const state = /name="state" value="([^"]+)"/.exec(html)![1]!;
    const posted = await client.send(`${h.tool.url}/lti/launch`, { form: { id_token: idToken, state } });
    expect(posted.status).toBe(303);
    const enter = new URL(posted.headers.get('location')!, h.tool.url);
    expect(enter.pathname).toBe('/lti/enter');
    // A browser that drops cookies (a frame blocking them): the entered page offers the same launch in a window.
    const cookieless = new FormClient();
    const entered = await cookieless.send(enter.toString());
    expect(entered.status).toBe(303);
    cookieless.cookies.clear();
    const offered = await cookieless.send(new URL(entered.headers.get('location')!, h.tool.url).toString());
    expect(offered.status).toBe(200);
    const offer = await offered.text();
    expect(offer).toMatch(/Open Loadline in a new window/);
    const windowHref = /href="(\/lti\/enter\?token=[^"]+)"/.exec(offer)![1]!;
    // The first token is spent.
    const again = await new FormClient().send(enter.toString());
    expect(again.status).toBe(400);
    expect(await again.text()).toMatch(/used or has expired/);
    // The new window signs in and lands.
    const win = new FormClient();
    const landed = await win.follow(`${h.tool.url}${windowHref.replace(/&amp;/g, '&')}`, {}, (u) => !u.pathname.startsWith('/lti/'));
    expect(new URL(landed.url).pathname).toBe('/bench');
    expect(await whoIs(h, win)).toMatchObject({ name: 'Milo Ferrant', role: 'student' });
  });
});

describe('refusals: a clear page and a log line each', () => {
  it('a bad signature (a key the platform does not publish)', async () => {
    const r = await postLaunch(() => undefined, { stray: true });
    // 1EdTech Security Framework 1.0 §5.1.3 (1): the signature with the platform's keys.
    expect(r.status).toBe(401);
    expect(['bad-signature', 'unknown-key']).toContain(r.reason);
    expect(r.page).toMatch(/not signed by the platform/);
  });

  it('a wrong aud', async () => {
    const r = await postLaunch((c) => void (c.aud = 'some-other-tool'));
    // §5.1.3 (3): aud must hold the client id.
    expect(r.status).toBe(401);
    expect(r.reason).toBe('wrong-aud');
    expect(r.page).toMatch(/for another tool/);
  });

  it('an azp that is not the client id, and several audiences without one', async () => {
    // §5.1.3 (4, 5): azp.
    const wrong = await postLaunch((c) => void (c.azp = 'someone-else'));
    expect(wrong.reason).toBe('wrong-azp');
    const many = await postLaunch((c) => void (c.aud = [h.platform.clientId, 'another-audience']));
    expect(many.reason).toBe('missing-azp');
  });

  it('a wrong iss', async () => {
    const r = await postLaunch((c) => void (c.iss = 'https://elsewhere.example'));
    // §5.1.3 (2): iss must be the registered issuer.
    expect(r.reason).toBe('wrong-iss');
  });

  it('an expired token, and one issued too long ago', async () => {
    const now = Math.floor(Date.now() / 1000);
    const expired = await postLaunch(() => undefined, { issuedAt: now - 400, expiresInS: 300 });
    // §5.1.3 (7): exp.
    expect(expired.status).toBe(401);
    expect(expired.reason).toBe('expired');
    expect(expired.page).toMatch(/expired/);
    const old = await postLaunch(() => undefined, { issuedAt: now - 3600, expiresInS: 7200 });
    // §5.1.3 (8): iat within an acceptable window (ten minutes here).
    expect(old.reason).toBe('bad-iat');
  });

  it('a replayed nonce: the same launch posted twice works once', async () => {
    const first = await postLaunch(() => undefined);
    expect(first.status).toBe(303);
    const again = await first.client.send(`${h.tool.url}/lti/launch`, { form: { id_token: first.idToken, state: first.state } });
    // §5.1.3 (9): the nonce once only.
    expect(again.status).toBe(401);
    expect(await again.text()).toMatch(/used once/);
    expect(h.logs.at(-1)?.extra).toMatchObject({ reason: 'replayed-nonce' });
  });

  it('a nonce that is not the one sent with the state', async () => {
    const r = await postLaunch((c) => void (c.nonce = 'a-nonce-from-another-login'));
    expect(r.reason).toBe('wrong-nonce');
  });

  it('an unknown deployment', async () => {
    const r = await postLaunch((c) => void (c[CLAIM.deploymentId] = 'deployment-nobody-registered'));
    // LTI Core 1.3 §5.3.3: the deployment id claim names a registered deployment.
    expect(r.status).toBe(403);
    expect(r.reason).toBe('unknown-deployment');
    expect(r.page).toMatch(/deployment-nobody-registered/);
  });

  it('missing roles, and roles with no place in Loadline', async () => {
    const missing = await postLaunch((c) => void delete c[CLAIM.roles]);
    // LTI Core 1.3 §5.3.7: the roles claim is required.
    expect(missing.status).toBe(400);
    expect(missing.reason).toBe('missing-roles');
    expect(missing.page).toMatch(/no roles claim/);
    const mentor = await postLaunch((c) => void (c[CLAIM.roles] = ['http://purl.imsglobal.org/vocab/lis/v2/membership#Mentor']));
    expect(mentor.status).toBe(403);
    expect(mentor.reason).toBe('unmapped-roles');
  });

  it('a wrong LTI version and a message type Loadline does not open', async () => {
    // LTI Core 1.3 §5.3.1 (message type) and §5.3.2 (version).
    const version = await postLaunch((c) => void (c[CLAIM.version] = '1.1'));
    expect(version.reason).toBe('bad-version');
    const type = await postLaunch((c) => void (c[CLAIM.messageType] = 'LtiSubmissionReviewRequest'));
    expect(type.reason).toBe('bad-message-type');
  });

  it('a state Loadline never issued, and a login from an unregistered issuer', async () => {
    const client = new FormClient();
    const res = await client.send(`${h.tool.url}/lti/launch`, { form: { id_token: 'x.y.z', state: 'made-up-state' } });
    expect(res.status).toBe(400);
    expect(await res.text()).toMatch(/not one Loadline started/);
    const q = new URLSearchParams({ iss: 'https://unregistered.example', login_hint: 'x', target_link_uri: `${h.tool.url}/lti/launch` });
    const login = await client.send(`${h.tool.url}/lti/login?${q}`);
    expect(login.status).toBe(403);
    expect(await login.text()).toMatch(/not registered/);
    const noHint = await client.send(`${h.tool.url}/lti/login?iss=${encodeURIComponent(h.platform.issuer)}`);
    expect(noHint.status).toBe(400);
    expect(await noHint.text()).toMatch(/login_hint/);
  });

  it('answers a client that does not ask for a page in JSON, naming the field', async () => {
    const res = await fetch(`${h.tool.url}/lti/launch`, { method: 'POST', headers: { 'Content-Type': 'application/x-www-form-urlencoded', Accept: 'application/json' }, body: 'id_token=x.y.z&state=made-up' });
    expect(res.status).toBe(400);
    expect(await res.json()).toEqual({ error: { message: expect.stringMatching(/not one Loadline started/), field: 'state' } });
  });

  it('signs nobody in on a refused launch', async () => {
    const r = await postLaunch(() => undefined, { stray: true, user: 'qm-learner-juno' });
    expect(r.status).toBe(401);
    expect(await whoIs(h, r.client)).toBeNull();
    const made = await h.t.ctx.db.select().from(ltiAccounts).where(and(eq(ltiAccounts.platformId, h.platformId), eq(ltiAccounts.subject, 'qm-learner-juno')));
    expect(made).toHaveLength(0);
  });
});

describe('the session cookie of a launch', () => {
  it('is SameSite=None; Secure; Partitioned inside a frame over TLS, and the usual Lax cookie in a window', async () => {
    const t = await startTestApp({ TRUST_PROXY: '1' });
    try {
      const [student] = await t.ctx.db.select({ id: users.id }).from(users).where(eq(users.email, demoFirst('student').email));
      const framed = await supertest(t.app)
        .get(`/lti/enter?token=${await createHandoff(t.ctx.db, student!.id, '/bench')}`)
        .set('X-Forwarded-Proto', 'https')
        .set('Sec-Fetch-Dest', 'iframe');
      expect(framed.status).toBe(303);
      const framedCookie = (framed.headers['set-cookie'] as unknown as string[]).find((c) => c.startsWith('loadline.sid='))!;
      expect(framedCookie).toMatch(/SameSite=None/i);
      expect(framedCookie).toMatch(/; Secure/i);
      expect(framedCookie).toMatch(/; Partitioned/i);
      const window = await supertest(t.app)
        .get(`/lti/enter?token=${await createHandoff(t.ctx.db, student!.id, '/bench')}`)
        .set('X-Forwarded-Proto', 'https')
        .set('Sec-Fetch-Dest', 'document');
      const windowCookie = (window.headers['set-cookie'] as unknown as string[]).find((c) => c.startsWith('loadline.sid='))!;
      expect(windowCookie).toMatch(/SameSite=Lax/i);
      expect(windowCookie).not.toMatch(/Partitioned/i);
    } finally {
      await t.close();
    }
  });
});

describe('the frame policy', () => {
  it('lets only the registered platforms frame Loadline', async () => {
    const res = await fetch(`${h.tool.url}/api/auth/me`);
    const csp = res.headers.get('content-security-policy') ?? '';
    expect(csp).toMatch(new RegExp(`frame-ancestors 'self' ${h.platform.url.replace(/[.:/]/g, '\\$&')}`));
    expect(csp).toMatch(new RegExp(`form-action 'self' ${h.platform.url.replace(/[.:/]/g, '\\$&')}`));
    expect(res.headers.get('x-frame-options')).toBeNull();
  });
});
