/**
 * Third-party initiated login (OIDC): the platform sends the browser here with
 * its issuer and a login hint; Loadline answers with a redirect to the
 * platform's authorisation endpoint carrying a fresh state and nonce.
 * 1EdTech Security Framework 1.0 §5.1.1.1 (third-party initiated login) and
 * §5.1.1.2 (authentication request).
 *
 * The state is kept on the server, keyed by (the hash of) the state parameter
 * itself, not in a cookie: a platform that frames Loadline in a browser that
 * blocks third-party cookies would otherwise lose it. It is random, lives ten
 * minutes and is used once; the nonce sent with it must come back in the
 * id_token, which binds the token to this one login.
 */
import { createHash, randomBytes } from 'node:crypto';
import { and, eq, isNull, lt, or, isNotNull } from 'drizzle-orm';
import { z } from 'zod';
import type { DbOrTx } from '../db/client.ts';
import { platformsOfIssuer, type PlatformRow } from './platforms.ts';
import { refuse } from './refusal.ts';
import { ltiLoginStates } from './tables.ts';

export const LOGIN_STATE_TTL_MS = 10 * 60 * 1000;

export const hashOf = (value: string) => createHash('sha256').update(value).digest('hex');
export const randomToken = (bytes = 32) => randomBytes(bytes).toString('base64url');

const text = (max: number) => z.string().trim().min(1).max(max);
export const loginParamsSchema = z.object({
  iss: text(500),
  login_hint: text(2000),
  target_link_uri: text(2000),
  lti_message_hint: z.string().max(4000).optional(),
  client_id: z.string().max(255).optional(),
  lti_deployment_id: z.string().max(255).optional(),
});

/** The tool addresses a login may name as its target: Loadline's own launch and deep-linking addresses. */
export function isOwnTarget(target: string, base: string): boolean {
  try {
    const t = new URL(target);
    const b = new URL(base);
    return t.origin === b.origin && t.pathname.startsWith('/lti/');
  } catch {
    return false;
  }
}

export interface LoginRedirect {
  location: string;
  platform: PlatformRow;
}

export async function startLogin(db: DbOrTx, params: unknown, base: string, now = new Date()): Promise<LoginRedirect> {
  const parsed = loginParamsSchema.safeParse(params);
  if (!parsed.success) {
    const issue = parsed.error.issues[0];
    const field = issue?.path.join('.') || 'request';
    throw refuse(400, 'This login request is incomplete', `The platform's login request is missing or has a bad “${field}”.`, 'bad-login-request', { field });
  }
  const p = parsed.data;
  const platforms = await platformsOfIssuer(db, p.iss, p.client_id || undefined);
  if (platforms.length === 0) {
    throw refuse(403, 'This platform is not registered', `No platform with the issuer ${p.iss}${p.client_id ? ` and client id ${p.client_id}` : ''} is registered with Loadline.`, 'unknown-issuer', {
      iss: p.iss,
      clientId: p.client_id,
    });
  }
  if (platforms.length > 1) {
    throw refuse(400, 'Which registration?', 'Several registrations share this issuer, and the login request does not say which client id it is for.', 'ambiguous-issuer', { iss: p.iss });
  }
  const platform = platforms[0]!;
  if (!isOwnTarget(p.target_link_uri, base)) {
    throw refuse(400, 'This link does not lead to Loadline', `The launch's target (${p.target_link_uri}) is not one of Loadline's addresses.`, 'foreign-target', { target: p.target_link_uri });
  }

  const state = randomToken();
  const nonce = randomToken(24);
  // Old states go as new ones come: a login costs one delete of what has expired.
  await db.delete(ltiLoginStates).where(or(lt(ltiLoginStates.expiresAt, now), and(isNotNull(ltiLoginStates.usedAt), lt(ltiLoginStates.createdAt, new Date(now.getTime() - LOGIN_STATE_TTL_MS)))));
  await db.insert(ltiLoginStates).values({
    stateHash: hashOf(state),
    nonce,
    platformId: platform.id,
    targetLinkUri: p.target_link_uri,
    expiresAt: new Date(now.getTime() + LOGIN_STATE_TTL_MS),
  });

  const auth = new URL(platform.authUrl);
  const query: Record<string, string> = {
    scope: 'openid',
    response_type: 'id_token',
    response_mode: 'form_post',
    prompt: 'none',
    client_id: platform.clientId,
    redirect_uri: `${base}/lti/launch`,
    login_hint: p.login_hint,
    state,
    nonce,
  };
  if (p.lti_message_hint) query.lti_message_hint = p.lti_message_hint;
  for (const [k, v] of Object.entries(query)) auth.searchParams.set(k, v);
  return { location: auth.toString(), platform };
}

export interface LoginState {
  platformId: number;
  nonce: string;
  targetLinkUri: string;
  expiresAt: Date;
  usedAt: Date | null;
}

export async function findState(db: DbOrTx, state: string): Promise<LoginState | null> {
  const [row] = await db
    .select({ platformId: ltiLoginStates.platformId, nonce: ltiLoginStates.nonce, targetLinkUri: ltiLoginStates.targetLinkUri, expiresAt: ltiLoginStates.expiresAt, usedAt: ltiLoginStates.usedAt })
    .from(ltiLoginStates)
    .where(eq(ltiLoginStates.stateHash, hashOf(state)));
  return row ?? null;
}

/** Marks the state used; false when another request used it first. Its nonce is then spent for good. */
export async function consumeState(db: DbOrTx, state: string, now = new Date()): Promise<boolean> {
  const rows = await db
    .update(ltiLoginStates)
    .set({ usedAt: now })
    .where(and(eq(ltiLoginStates.stateHash, hashOf(state)), isNull(ltiLoginStates.usedAt)))
    .returning({ platformId: ltiLoginStates.platformId });
  return rows.length === 1;
}
