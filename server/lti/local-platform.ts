/**
 * Quillmoor: a small LTI 1.3 platform of our own, for development and tests
 * only. It holds one course with invented people, launches a learner and an
 * instructor into Loadline (in a window or a frame), serves deep linking, the
 * grade service (line items and scores) and the roster service, and records
 * everything Loadline sent it. It refuses to start in production, and nothing
 * the server serves imports it (lint rule): `scripts/lti-platform.ts` and the
 * tests start it.
 *
 * It checks what Loadline sends as a platform must: the client assertion of a
 * token request (1EdTech Security Framework 1.0 §4.1), the bearer token and
 * its scope on each service call, and the signed deep-linking answer
 * (Deep Linking 2.0 §4.5).
 */
import { randomBytes, randomUUID } from 'node:crypto';
import type { AddressInfo } from 'node:net';
import type { Server } from 'node:http';
import express, { type Request, type Response } from 'express';
import { createRemoteJWKSet, exportJWK, generateKeyPair, jwtVerify, SignJWT, type CryptoKey, type JWK, type JWTPayload } from 'jose';
import type { PlatformInput } from '../../shared/api/lti.ts';
import { CLAIM, LTI_VERSION, MEDIA, MESSAGE, SCOPE } from './claims.ts';

export const LOCAL_PLATFORM_NAME = 'Quillmoor';

const LIS = 'http://purl.imsglobal.org/vocab/lis/v2/membership';
export const ROLE = {
  learner: `${LIS}#Learner`,
  instructor: `${LIS}#Instructor`,
  teachingAssistant: `${LIS}/Instructor#TeachingAssistant`,
  mentor: `${LIS}#Mentor`,
} as const;

export interface CoursePerson {
  id: string;
  name: string;
  givenName: string;
  familyName: string;
  email: string;
  roles: string[];
  status: 'Active' | 'Inactive' | 'Deleted';
}

/** The course's people: all invented. */
export const COURSE_PEOPLE: CoursePerson[] = [
  { id: 'qm-learner-wren', name: 'Wren Ashcombe', givenName: 'Wren', familyName: 'Ashcombe', email: 'wren.ashcombe@quillmoor.example', roles: [ROLE.learner], status: 'Active' },
  { id: 'qm-learner-milo', name: 'Milo Ferrant', givenName: 'Milo', familyName: 'Ferrant', email: 'milo.ferrant@quillmoor.example', roles: [ROLE.learner], status: 'Active' },
  { id: 'qm-learner-juno', name: 'Juno Castellaw', givenName: 'Juno', familyName: 'Castellaw', email: 'juno.castellaw@quillmoor.example', roles: [ROLE.learner], status: 'Active' },
  { id: 'qm-teacher-ilse', name: 'Ilse Varnholt', givenName: 'Ilse', familyName: 'Varnholt', email: 'ilse.varnholt@quillmoor.example', roles: [ROLE.instructor], status: 'Active' },
  { id: 'qm-ta-osric', name: 'Osric Penhallow', givenName: 'Osric', familyName: 'Penhallow', email: 'osric.penhallow@quillmoor.example', roles: [ROLE.teachingAssistant], status: 'Active' },
];

export interface LocalLink {
  id: string;
  title: string;
  custom: Record<string, string>;
  lineItemId: string | null;
}

export interface LocalScore {
  userId: string;
  scoreGiven?: number;
  scoreMaximum?: number;
  activityProgress: string;
  gradingProgress: string;
  timestamp: string;
  comment?: string;
}

export interface LocalLineItem {
  id: string;
  label: string;
  scoreMaximum: number;
  resourceLinkId: string | null;
  resourceId: string | null;
  tag: string | null;
  scores: LocalScore[];
}

export interface Received {
  kind: 'token' | 'score' | 'deep-link' | 'memberships' | 'lineitems' | 'refused';
  at: string;
  detail: unknown;
}

export interface LaunchOptions {
  /** A person's id (COURSE_PEOPLE) or any subject. */
  user: string;
  /** A resource link's id; without it and without deepLink, the course's first link. */
  link?: string;
  deepLink?: boolean;
}

export interface LocalPlatform {
  readonly name: string;
  readonly url: string;
  readonly issuer: string;
  readonly clientId: string;
  readonly deploymentId: string;
  readonly course: { id: string; title: string; label: string };
  readonly people: CoursePerson[];
  readonly links: Map<string, LocalLink>;
  readonly lineItems: Map<string, LocalLineItem>;
  readonly received: Received[];
  /** What Loadline's admin enters for this platform. */
  registration(): PlatformInput;
  /** Where a browser starts a launch (a frame around it with `frame`). */
  launchUrl(opts: LaunchOptions & { frame?: boolean }): string;
  /** The claims of an id_token for a launch (tests change them to make bad ones). */
  launchClaims(opts: LaunchOptions & { nonce: string }): JWTPayload;
  /** Signs an id_token with the platform's key, or with a key it does not publish (`stray`). */
  sign(claims: JWTPayload, opts?: { stray?: boolean; expiresInS?: number; issuedAt?: number }): Promise<string>;
  /** Adds a resource link (as a course designer would by hand, without deep linking). */
  addLink(link: Omit<LocalLink, 'lineItemId'>, lineItem?: { label: string; scoreMaximum: number }): LocalLink;
  /** The latest score of each person on each line item. */
  gradebook(): { lineItemId: string; label: string; userId: string; scoreGiven: number | null; scoreMaximum: number | null; comment: string | null; timestamp: string }[];
  /** Stops answering (the port is closed), to stand for a platform that is down; start() again on the same port. */
  stop(): Promise<void>;
  start(): Promise<void>;
  close(): Promise<void>;
}

export interface LocalPlatformOptions {
  /** Loadline's public address, e.g. http://127.0.0.1:5180. */
  toolUrl: string;
  host?: string;
  port?: number;
  clientId?: string;
  deploymentId?: string;
  /** Members per page of the roster service (to exercise paging). */
  pageSize?: number;
}

const esc = (s: string) => s.replace(/[&<>"']/g, (c) => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;' })[c] ?? c);

function html(title: string, body: string): string {
  return `<!doctype html><html lang="en"><head><meta charset="utf-8"><title>${esc(title)} · ${LOCAL_PLATFORM_NAME}</title>
<style>body{font-family:system-ui,sans-serif;margin:0;background:#f4f1ea;color:#2b2118}header{background:#3d5a40;color:#fff;padding:.8rem 1.5rem;font-weight:600}
main{padding:1.5rem;max-width:70rem}table{border-collapse:collapse;margin:.5rem 0 1.5rem}td,th{border:1px solid #cbbfa8;padding:.35rem .6rem;text-align:left}
a.button{display:inline-block;background:#3d5a40;color:#fff;padding:.25rem .6rem;border-radius:.3rem;text-decoration:none;margin:.1rem}
iframe{width:100%;height:80vh;border:2px solid #3d5a40;background:#fff}</style></head>
<body><header>${LOCAL_PLATFORM_NAME} · course site (development platform)</header><main>${body}</main></body></html>`;
}

export async function startLocalPlatform(opts: LocalPlatformOptions): Promise<LocalPlatform> {
  if (process.env.NODE_ENV === 'production') throw new Error(`${LOCAL_PLATFORM_NAME} is a development platform and never runs in production`);
  const host = opts.host ?? '127.0.0.1';
  const toolUrl = opts.toolUrl.replace(/\/+$/, '');
  const clientId = opts.clientId ?? `loadline-${randomBytes(4).toString('hex')}`;
  const deploymentId = opts.deploymentId ?? 'quillmoor-deployment-1';
  const pageSize = opts.pageSize ?? 2;
  const keys = await generateKeyPair('RS256', { extractable: true });
  const stray = await generateKeyPair('RS256', { extractable: true });
  const kid = `qm-${randomBytes(4).toString('hex')}`;
  const publicJwk: JWK = { ...(await exportJWK(keys.publicKey)), kid, alg: 'RS256', use: 'sig' };
  const toolKeys = createRemoteJWKSet(new URL(`${toolUrl}/lti/jwks.json`), { cooldownDuration: 0, cacheMaxAge: 0 });

  const course = { id: 'qm-course-auto-210', title: 'Automotive Electrical II: Charging Systems', label: 'AUTO-210' };
  const people = COURSE_PEOPLE.map((p) => ({ ...p, roles: [...p.roles] }));
  const links = new Map<string, LocalLink>();
  const lineItems = new Map<string, LocalLineItem>();
  const received: Received[] = [];
  const tokens = new Map<string, { scopes: string[]; until: number }>();
  const record = (kind: Received['kind'], detail: unknown) => received.push({ kind, at: new Date().toISOString(), detail });

  let port = opts.port ?? 0;
  let base = '';
  const issuer = () => base;

  const app = express();
  app.disable('x-powered-by');
  app.use(express.urlencoded({ extended: false, limit: '256kb' }));
  app.use(express.json({ limit: '256kb', type: ['application/json', MEDIA.score, MEDIA.lineItem] }));

  const addLineItem = (item: Omit<LocalLineItem, 'id' | 'scores'>): LocalLineItem => {
    const li: LocalLineItem = { ...item, id: `li-${lineItems.size + 1}-${randomBytes(3).toString('hex')}`, scores: [] };
    lineItems.set(li.id, li);
    return li;
  };
  const addLink = (link: Omit<LocalLink, 'lineItemId'>, lineItem?: { label: string; scoreMaximum: number }): LocalLink => {
    const made: LocalLink = { ...link, lineItemId: null };
    if (lineItem) made.lineItemId = addLineItem({ ...lineItem, resourceLinkId: link.id, resourceId: null, tag: null }).id;
    links.set(made.id, made);
    return made;
  };

  const personOf = (id: string): CoursePerson =>
    people.find((p) => p.id === id) ?? { id, name: '', givenName: '', familyName: '', email: '', roles: [ROLE.learner], status: 'Active' };

  const launchClaims = (o: LaunchOptions & { nonce: string }): JWTPayload => {
    const person = personOf(o.user);
    const claims: JWTPayload = {
      iss: issuer(),
      aud: clientId,
      sub: person.id,
      nonce: o.nonce,
      name: person.name || undefined,
      given_name: person.givenName || undefined,
      family_name: person.familyName || undefined,
      email: person.email || undefined,
      [CLAIM.deploymentId]: deploymentId,
      [CLAIM.version]: LTI_VERSION,
      [CLAIM.roles]: person.roles,
      [CLAIM.context]: { id: course.id, title: course.title, label: course.label, type: ['http://purl.imsglobal.org/vocab/lis/v2/course#CourseOffering'] },
      [CLAIM.nrps]: { context_memberships_url: `${base}/courses/${course.id}/memberships`, service_versions: ['2.0'] },
      'https://purl.imsglobal.org/spec/lti/claim/tool_platform': { guid: `quillmoor-${port}`, name: LOCAL_PLATFORM_NAME, product_family_code: 'quillmoor' },
    };
    if (o.deepLink) {
      claims[CLAIM.messageType] = MESSAGE.deepLinkingRequest;
      claims[CLAIM.targetLinkUri] = `${toolUrl}/lti/deep-linking`;
      claims[CLAIM.deepLinkingSettings] = {
        deep_link_return_url: `${base}/deep-link-return`,
        accept_types: ['ltiResourceLink'],
        accept_presentation_document_targets: ['iframe', 'window'],
        accept_multiple: false,
        accept_lineitem: true,
        data: `qm-dl-${randomBytes(4).toString('hex')}`,
      };
      return claims;
    }
    const link = o.link ? links.get(o.link) : [...links.values()][0];
    const linkId = link?.id ?? o.link ?? 'qm-link-unplaced';
    claims[CLAIM.messageType] = MESSAGE.resourceLink;
    claims[CLAIM.targetLinkUri] = `${toolUrl}/lti/launch`;
    claims[CLAIM.resourceLink] = { id: linkId, title: link?.title ?? 'Loadline' };
    if (link?.custom && Object.keys(link.custom).length) claims[CLAIM.custom] = link.custom;
    claims[CLAIM.ags] = {
      scope: [SCOPE.lineItem, SCOPE.score, SCOPE.resultReadOnly],
      lineitems: `${base}/courses/${course.id}/lineitems`,
      ...(link?.lineItemId ? { lineitem: `${base}/lineitems/${link.lineItemId}` } : {}),
    };
    claims[CLAIM.launchPresentation] = { document_target: 'iframe', return_url: `${base}/` };
    return claims;
  };

  const sign = async (claims: JWTPayload, o: { stray?: boolean; expiresInS?: number; issuedAt?: number } = {}) => {
    const now = Math.floor(Date.now() / 1000);
    const iat = o.issuedAt ?? now;
    return new SignJWT(claims)
      .setProtectedHeader({ alg: 'RS256', kid, typ: 'JWT' })
      .setIssuedAt(iat)
      .setExpirationTime(iat + (o.expiresInS ?? 300))
      .sign((o.stray ? stray.privateKey : keys.privateKey) as CryptoKey);
  };

  const launchUrl = (o: LaunchOptions & { frame?: boolean }) => {
    const q = new URLSearchParams({ user: o.user });
    if (o.link) q.set('link', o.link);
    if (o.deepLink) q.set('deepLink', '1');
    if (o.frame) q.set('frame', '1');
    return `${base}/launch?${q}`;
  };

  // -- launches ------------------------------------------------------------
  app.get('/launch', (req, res) => {
    const user = String(req.query.user ?? '');
    const link = typeof req.query.link === 'string' ? req.query.link : undefined;
    const deepLink = req.query.deepLink === '1';
    if (req.query.frame === '1') {
      const inner = launchUrl({ user, link, deepLink });
      res.type('html').send(html('Course', `<p>Loadline, inside the course page:</p><iframe title="Loadline" src="${esc(inner)}" allow="fullscreen"></iframe>`));
      return;
    }
    // Third-party initiated login: the browser goes to the tool with the issuer and a hint of who and what.
    const hint = Buffer.from(JSON.stringify({ link: link ?? null, deepLink })).toString('base64url');
    const q = new URLSearchParams({
      iss: issuer(),
      login_hint: user,
      lti_message_hint: hint,
      target_link_uri: deepLink ? `${toolUrl}/lti/deep-linking` : `${toolUrl}/lti/launch`,
      client_id: clientId,
      lti_deployment_id: deploymentId,
    });
    res.redirect(302, `${toolUrl}/lti/login?${q}`);
  });

  // The authorisation endpoint: checks the tool's authentication request and posts the id_token back.
  app.get('/auth', async (req, res) => {
    const q = req.query as Record<string, string | undefined>;
    const problems: string[] = [];
    if (q.scope !== 'openid') problems.push('scope must be openid');
    if (q.response_type !== 'id_token') problems.push('response_type must be id_token');
    if (q.response_mode !== 'form_post') problems.push('response_mode must be form_post');
    if (q.prompt !== 'none') problems.push('prompt must be none');
    if (q.client_id !== clientId) problems.push('client_id is not the registered one');
    if (q.redirect_uri !== `${toolUrl}/lti/launch`) problems.push('redirect_uri is not registered');
    if (!q.state || !q.nonce) problems.push('state and nonce are required');
    if (!q.login_hint) problems.push('login_hint is required');
    if (problems.length) {
      record('refused', { at: 'auth', problems });
      res.status(400).type('html').send(html('Refused', `<p>Authentication request refused: ${esc(problems.join('; '))}</p>`));
      return;
    }
    let hint: { link?: string | null; deepLink?: boolean } = {};
    try {
      hint = JSON.parse(Buffer.from(q.lti_message_hint ?? '', 'base64url').toString('utf8')) as typeof hint;
    } catch {
      hint = {};
    }
    const token = await sign(launchClaims({ user: q.login_hint!, link: hint.link ?? undefined, deepLink: !!hint.deepLink, nonce: q.nonce! }));
    res.type('html').send(`<!doctype html><html><head><title>Launching</title></head><body>
<form id="launch" method="post" action="${esc(q.redirect_uri!)}"><input type="hidden" name="id_token" value="${esc(token)}"><input type="hidden" name="state" value="${esc(q.state!)}"><noscript><button>Continue</button></noscript></form>
<script>document.getElementById('launch').submit();</script></body></html>`);
  });

  app.get('/favicon.ico', (_req, res) => {
    res.status(204).end();
  });

  app.get('/jwks', (_req, res) => {
    res.json({ keys: [publicJwk] });
  });

  // -- services ------------------------------------------------------------
  app.post('/token', async (req, res) => {
    const body = req.body as Record<string, string | undefined>;
    try {
      if (body.grant_type !== 'client_credentials') throw new Error('grant_type must be client_credentials');
      if (body.client_assertion_type !== 'urn:ietf:params:oauth:client-assertion-type:jwt-bearer') throw new Error('client_assertion_type must be jwt-bearer');
      const { payload } = await jwtVerify(body.client_assertion ?? '', toolKeys, { issuer: clientId, subject: clientId, audience: `${base}/token`, algorithms: ['RS256'] });
      if (typeof payload.jti !== 'string') throw new Error('the assertion has no jti');
      const asked = (body.scope ?? '').split(' ').filter(Boolean);
      const allowed: string[] = [SCOPE.lineItem, SCOPE.lineItemReadOnly, SCOPE.score, SCOPE.resultReadOnly, SCOPE.memberships];
      const unknown = asked.filter((s) => !allowed.includes(s));
      if (unknown.length) throw new Error(`scopes not offered: ${unknown.join(' ')}`);
      const token = randomBytes(24).toString('base64url');
      tokens.set(token, { scopes: asked, until: Date.now() + 3600_000 });
      record('token', { scopes: asked, kid: (JSON.parse(Buffer.from((body.client_assertion ?? '').split('.')[0] ?? '', 'base64url').toString()) as { kid?: string }).kid });
      res.json({ access_token: token, token_type: 'Bearer', expires_in: 3600, scope: asked.join(' ') });
    } catch (err) {
      record('refused', { at: 'token', error: (err as Error).message });
      res.status(400).json({ error: 'invalid_client', error_description: (err as Error).message });
    }
  });

  const bearer = (req: Request, res: Response, scope: string): boolean => {
    const token = /^Bearer (.+)$/.exec(req.get('authorization') ?? '')?.[1];
    const held = token ? tokens.get(token) : undefined;
    if (!held || held.until < Date.now()) {
      record('refused', { at: req.path, error: 'no valid bearer token' });
      res.status(401).json({ error: 'invalid_token' });
      return false;
    }
    if (!held.scopes.includes(scope)) {
      record('refused', { at: req.path, error: `token lacks ${scope}` });
      res.status(403).json({ error: 'insufficient_scope' });
      return false;
    }
    return true;
  };

  const lineItemJson = (li: LocalLineItem) => ({
    id: `${base}/lineitems/${li.id}`,
    label: li.label,
    scoreMaximum: li.scoreMaximum,
    ...(li.resourceLinkId ? { resourceLinkId: li.resourceLinkId } : {}),
    ...(li.resourceId ? { resourceId: li.resourceId } : {}),
    ...(li.tag ? { tag: li.tag } : {}),
  });

  app.get('/courses/:course/lineitems', (req, res) => {
    if (!bearer(req, res, SCOPE.lineItem)) return;
    record('lineitems', { query: req.query });
    const link = typeof req.query.resource_link_id === 'string' ? req.query.resource_link_id : null;
    res.type('application/vnd.ims.lis.v2.lineitemcontainer+json').send(JSON.stringify([...lineItems.values()].filter((li) => !link || li.resourceLinkId === link).map(lineItemJson)));
  });

  app.post('/courses/:course/lineitems', (req, res) => {
    if (!bearer(req, res, SCOPE.lineItem)) return;
    const b = req.body as Partial<{ label: string; scoreMaximum: number; resourceLinkId: string; resourceId: string; tag: string }>;
    if (typeof b.label !== 'string' || !b.label || typeof b.scoreMaximum !== 'number' || b.scoreMaximum <= 0) {
      record('refused', { at: 'lineitems', error: 'label and a positive scoreMaximum are required' });
      res.status(400).json({ error: 'label and a positive scoreMaximum are required' });
      return;
    }
    const li = addLineItem({ label: b.label, scoreMaximum: b.scoreMaximum, resourceLinkId: b.resourceLinkId ?? null, resourceId: b.resourceId ?? null, tag: b.tag ?? null });
    const link = b.resourceLinkId ? links.get(b.resourceLinkId) : undefined;
    if (link && !link.lineItemId) link.lineItemId = li.id;
    record('lineitems', { created: lineItemJson(li) });
    res.status(201).type(MEDIA.lineItem).send(JSON.stringify(lineItemJson(li)));
  });

  app.post('/lineitems/:id/scores', (req, res) => {
    if (!bearer(req, res, SCOPE.score)) return;
    const li = lineItems.get(String(req.params.id));
    if (!li) {
      res.status(404).json({ error: 'no such line item' });
      return;
    }
    if (!req.is(MEDIA.score)) {
      record('refused', { at: 'score', error: `content type ${req.get('content-type')}` });
      res.status(415).json({ error: `send ${MEDIA.score}` });
      return;
    }
    const s = req.body as Partial<LocalScore>;
    const problems: string[] = [];
    if (typeof s.userId !== 'string' || !s.userId) problems.push('userId');
    if (typeof s.timestamp !== 'string' || Number.isNaN(Date.parse(s.timestamp))) problems.push('timestamp');
    if (!['Initialized', 'Started', 'InProgress', 'Submitted', 'Completed'].includes(String(s.activityProgress))) problems.push('activityProgress');
    if (!['FullyGraded', 'Pending', 'PendingManual', 'Failed', 'NotReady'].includes(String(s.gradingProgress))) problems.push('gradingProgress');
    if (s.scoreGiven !== undefined && (typeof s.scoreGiven !== 'number' || typeof s.scoreMaximum !== 'number' || s.scoreMaximum <= 0)) problems.push('scoreGiven/scoreMaximum');
    if (problems.length) {
      record('refused', { at: 'score', problems });
      res.status(400).json({ error: `bad score: ${problems.join(', ')}` });
      return;
    }
    li.scores.push(s as LocalScore);
    record('score', { lineItemId: li.id, score: s });
    res.status(204).end();
  });

  app.get('/courses/:course/memberships', (req, res) => {
    if (!bearer(req, res, SCOPE.memberships)) return;
    const page = Math.max(0, Number(req.query.page ?? 0) || 0);
    const slice = people.slice(page * pageSize, (page + 1) * pageSize);
    record('memberships', { page });
    if ((page + 1) * pageSize < people.length) res.setHeader('Link', `<${base}/courses/${course.id}/memberships?page=${page + 1}>; rel="next"`);
    res.type(MEDIA.memberships).send(
      JSON.stringify({
        id: `${base}/courses/${course.id}/memberships`,
        context: { id: course.id, label: course.label, title: course.title },
        members: slice.map((p) => ({ status: p.status, name: p.name, given_name: p.givenName, family_name: p.familyName, email: p.email, user_id: p.id, roles: p.roles })),
      }),
    );
  });

  // The deep-linking answer: a form post from the browser, a JWT signed by the tool.
  app.post('/deep-link-return', async (req, res) => {
    try {
      const { payload } = await jwtVerify(String((req.body as { JWT?: string }).JWT ?? ''), toolKeys, { issuer: clientId, audience: issuer(), algorithms: ['RS256'] });
      if (payload[CLAIM.messageType] !== MESSAGE.deepLinkingResponse) throw new Error('not a deep linking response');
      if (payload[CLAIM.version] !== LTI_VERSION) throw new Error('not LTI 1.3.0');
      if (payload[CLAIM.deploymentId] !== deploymentId) throw new Error('another deployment');
      if (typeof payload.nonce !== 'string') throw new Error('no nonce');
      const items = (payload[CLAIM.contentItems] ?? []) as { type?: string; title?: string; url?: string; custom?: Record<string, string>; lineItem?: { label?: string; scoreMaximum?: number; resourceId?: string; tag?: string } }[];
      const made: LocalLink[] = [];
      for (const item of items) {
        if (item.type !== 'ltiResourceLink') continue;
        const link = addLink({ id: `qm-link-${randomUUID()}`, title: item.title ?? 'Loadline activity', custom: item.custom ?? {} });
        if (item.lineItem && typeof item.lineItem.scoreMaximum === 'number') {
          link.lineItemId = addLineItem({
            label: item.lineItem.label ?? link.title,
            scoreMaximum: item.lineItem.scoreMaximum,
            resourceLinkId: link.id,
            resourceId: item.lineItem.resourceId ?? null,
            tag: item.lineItem.tag ?? null,
          }).id;
        }
        made.push(link);
      }
      record('deep-link', { items, data: payload[CLAIM.deepLinkingData] ?? null, links: made.map((l) => l.id) });
      res.type('html').send(html('Activity added', `<h1>Activity added</h1><ul>${made.map((l) => `<li data-link="${esc(l.id)}">${esc(l.title)}</li>`).join('')}</ul><p><a href="/">Back to the course</a></p>`));
    } catch (err) {
      record('refused', { at: 'deep-link-return', error: (err as Error).message });
      res.status(400).type('html').send(html('Refused', `<p>The tool's answer was refused: ${esc((err as Error).message)}</p>`));
    }
  });

  const gradebook = () => {
    const out: ReturnType<LocalPlatform['gradebook']> = [];
    for (const li of lineItems.values()) {
      const latest = new Map<string, LocalScore>();
      for (const s of li.scores) {
        const was = latest.get(s.userId);
        if (!was || Date.parse(s.timestamp) >= Date.parse(was.timestamp)) latest.set(s.userId, s);
      }
      for (const s of latest.values()) {
        out.push({ lineItemId: li.id, label: li.label, userId: s.userId, scoreGiven: s.scoreGiven ?? null, scoreMaximum: s.scoreMaximum ?? null, comment: s.comment ?? null, timestamp: s.timestamp });
      }
    }
    return out;
  };

  // The course page: who is in it, its links, its gradebook and what the tool sent.
  app.get('/', (_req, res) => {
    const row = (p: CoursePerson) => {
      const role = p.roles.map((r) => r.split('#').pop()).join(', ');
      const launches = [...links.values()]
        .map((l) => `<a class="button" href="${esc(launchUrl({ user: p.id, link: l.id }))}">${esc(l.title)}</a><a class="button" href="${esc(launchUrl({ user: p.id, link: l.id, frame: true }))}">framed</a>`)
        .join(' ');
      const add = p.roles.some((r) => r.includes('Instructor')) ? `<a class="button" href="${esc(launchUrl({ user: p.id, deepLink: true, frame: true }))}">Add a Loadline activity</a>` : '';
      return `<tr><td>${esc(p.name)}</td><td>${esc(role)}</td><td>${launches || '—'} ${add}</td></tr>`;
    };
    const grades = gradebook()
      .map((g) => `<tr><td>${esc(g.label)}</td><td>${esc(personOf(g.userId).name || g.userId)}</td><td>${g.scoreGiven ?? '—'} / ${g.scoreMaximum ?? '—'}</td><td>${esc(g.comment ?? '')}</td><td>${esc(g.timestamp)}</td></tr>`)
      .join('');
    res.type('html').send(
      html(
        course.title,
        `<h1>${esc(course.label)}: ${esc(course.title)}</h1>
<h2>People and launches</h2><table><tr><th>Name</th><th>Role</th><th>Open Loadline</th></tr>${people.map(row).join('')}</table>
<h2>Gradebook</h2><table data-testid="gradebook"><tr><th>Item</th><th>Student</th><th>Score</th><th>Comment</th><th>When</th></tr>${grades || '<tr><td colspan="5">No grades yet</td></tr>'}</table>
<h2>Received from Loadline</h2><p>${received.length} messages: ${esc(
          Object.entries(received.reduce<Record<string, number>>((m, r) => ({ ...m, [r.kind]: (m[r.kind] ?? 0) + 1 }), {}))
            .map(([k, n]) => `${k} ${n}`)
            .join(', ') || 'none yet',
        )}</p>`,
      ),
    );
  });

  app.get('/_state', (_req, res) => {
    res.json({ links: [...links.values()], gradebook: gradebook(), received });
  });

  let server: Server | null = null;
  const start = async () => {
    if (server) return;
    server = await new Promise<Server>((resolve, reject) => {
      const s = app.listen(port, host, () => resolve(s));
      s.once('error', reject);
    });
    port = (server.address() as AddressInfo).port;
    base = `http://${host}:${port}`;
  };
  const stop = async () => {
    const s = server;
    server = null;
    if (!s) return;
    await new Promise<void>((resolve) => {
      s.close(() => resolve());
      s.closeAllConnections();
    });
  };
  await start();

  return {
    name: LOCAL_PLATFORM_NAME,
    get url() {
      return base;
    },
    get issuer() {
      return base;
    },
    clientId,
    deploymentId,
    course,
    people,
    links,
    lineItems,
    received,
    registration: () => ({
      name: LOCAL_PLATFORM_NAME,
      issuer: base,
      clientId,
      authUrl: `${base}/auth`,
      tokenUrl: `${base}/token`,
      jwksUrl: `${base}/jwks`,
      deploymentIds: [deploymentId],
    }),
    launchUrl,
    launchClaims,
    sign,
    addLink,
    gradebook,
    stop,
    start,
    close: stop,
  };
}
