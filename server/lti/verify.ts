/**
 * The id_token of a launch, verified before anything in it is believed.
 * 1EdTech Security Framework 1.0 §5.1.3 (authentication response validation):
 * the signature with the platform's published keys (RS256), iss = the
 * registered issuer, aud holding the client id, azp = the client id when
 * present (and required with several audiences), exp in the future, iat
 * neither in the future nor old, and the nonce the one sent with this state,
 * used once. Then LTI Core 1.3 §5.3 (required message claims): message type,
 * version 1.3.0, a registered deployment id, the roles claim, and a resource
 * link for a resource-link launch.
 */
import { createRemoteJWKSet, errors as joseErrors, jwtVerify, type JWTPayload } from 'jose';
import { z } from 'zod';
import type { Db } from '../db/client.ts';
import { CLAIM, launchClaimsSchema, MESSAGE, type LaunchClaims } from './claims.ts';
import { consumeState, findState } from './login.ts';
import { hasDeployment, platformById, type PlatformRow } from './platforms.ts';
import { refuse } from './refusal.ts';

/** Leeway for clocks that differ a little. */
export const CLOCK_TOLERANCE_S = 30;
/** An id_token older than this is refused, however late its exp. */
export const MAX_TOKEN_AGE_S = 10 * 60;

type KeySet = ReturnType<typeof createRemoteJWKSet>;
const keySets = new WeakMap<object, Map<string, KeySet>>();

/** A platform's key set, fetched and kept by jose (fetched again, at most every 30 s, when a token names a kid it does not hold). */
function keySetOf(db: Db, url: string): KeySet {
  let sets = keySets.get(db);
  if (!sets) {
    sets = new Map();
    keySets.set(db, sets);
  }
  let set = sets.get(url);
  if (!set) {
    set = createRemoteJWKSet(new URL(url), { timeoutDuration: 5_000, cooldownDuration: 30_000, cacheMaxAge: 10 * 60_000 });
    sets.set(url, set);
  }
  return set;
}

export const launchFormSchema = z.object({
  id_token: z.string().min(1).max(64_000),
  state: z.string().min(1).max(200),
});

export interface VerifiedLaunch {
  platform: PlatformRow;
  claims: LaunchClaims;
  deploymentId: string;
  messageType: LaunchClaims[typeof CLAIM.messageType];
}

function refusalOf(err: unknown, platform: PlatformRow) {
  const detail = { platformId: platform.id };
  if (err instanceof joseErrors.JWTExpired && err.claim === 'iat') {
    return refuse(401, 'This launch is too old or dated ahead', 'The launch token was issued too long ago.', 'bad-iat', detail);
  }
  if (err instanceof joseErrors.JWTExpired) return refuse(401, 'This launch has expired', 'The platform’s launch token has expired.', 'expired', detail);
  if (err instanceof joseErrors.JWSSignatureVerificationFailed) {
    return refuse(401, 'This launch is not signed by the platform', 'The launch token’s signature does not match the platform’s published keys.', 'bad-signature', detail);
  }
  if (err instanceof joseErrors.JWKSNoMatchingKey) {
    return refuse(401, 'This launch is not signed by the platform', 'The launch token is signed with a key the platform does not publish.', 'unknown-key', detail);
  }
  if (err instanceof joseErrors.JOSEAlgNotAllowed) return refuse(401, 'This launch is not signed as LTI requires', 'The launch token is not signed with RS256.', 'bad-alg', detail);
  if (err instanceof joseErrors.JWTClaimValidationFailed) {
    if (err.claim === 'aud') {
      return refuse(401, 'This launch is for another tool', 'The launch token is not addressed to Loadline’s client id on this platform.', 'wrong-aud', detail);
    }
    if (err.claim === 'iss') return refuse(401, 'This launch is from another platform', 'The launch token’s issuer is not the registered platform.', 'wrong-iss', detail);
    if (err.claim === 'iat') return refuse(401, 'This launch is too old or dated ahead', 'The launch token’s issue time is missing, in the future or too long ago.', 'bad-iat', detail);
    return refuse(401, 'This launch token is not valid', `The launch token’s “${err.claim}” is not valid.`, `bad-${err.claim}`, detail);
  }
  if (err instanceof joseErrors.JWKSTimeout || err instanceof joseErrors.JWKSInvalid || (err as { code?: string }).code === 'ERR_JOSE_GENERIC' || err instanceof TypeError) {
    return refuse(502, 'The platform’s keys could not be read', 'Loadline could not fetch the platform’s public keys to check the launch.', 'jwks-unreachable', { ...detail, error: String(err) });
  }
  if (err instanceof joseErrors.JOSEError) return refuse(401, 'This launch token is not valid', 'The launch token could not be verified.', 'bad-token', { ...detail, error: err.code });
  return null;
}

export async function verifyLaunch(db: Db, form: unknown, now = new Date()): Promise<VerifiedLaunch> {
  const parsed = launchFormSchema.safeParse(form);
  if (!parsed.success) {
    const field = parsed.error.issues[0]?.path.join('.') || 'request';
    throw refuse(400, 'This launch is incomplete', `The platform’s launch is missing its “${field}”.`, 'bad-launch-form', { field });
  }
  const { id_token: idToken, state } = parsed.data;

  const stored = await findState(db, state);
  if (!stored) throw refuse(400, 'This launch is not one Loadline started', 'The launch’s state is unknown: it was never issued here, or has been cleared.', 'unknown-state');
  if (stored.usedAt) throw refuse(401, 'This launch was used already', 'This launch (its state and nonce) has been used once; a launch works only once.', 'replayed-nonce', { platformId: stored.platformId });
  if (stored.expiresAt < now) throw refuse(401, 'This launch took too long', 'More than ten minutes passed between the login and the launch.', 'state-expired', { platformId: stored.platformId });
  const platform = await platformById(db, stored.platformId);
  if (!platform) throw refuse(403, 'This platform is not registered', 'The platform this launch started from is no longer registered with Loadline.', 'unknown-platform');

  let payload: JWTPayload;
  try {
    ({ payload } = await jwtVerify(idToken, keySetOf(db, platform.jwksUrl), {
      algorithms: ['RS256'],
      issuer: platform.issuer,
      audience: platform.clientId,
      clockTolerance: CLOCK_TOLERANCE_S,
      maxTokenAge: MAX_TOKEN_AGE_S,
      requiredClaims: ['iat', 'exp', 'sub', 'nonce'],
      currentDate: now,
    }));
  } catch (err) {
    throw refusalOf(err, platform) ?? err;
  }
  const detail = { platformId: platform.id };
  if (typeof payload.iat === 'number' && payload.iat > now.getTime() / 1000 + CLOCK_TOLERANCE_S) {
    throw refuse(401, 'This launch is too old or dated ahead', 'The launch token says it was issued in the future.', 'bad-iat', detail);
  }
  const audiences = Array.isArray(payload.aud) ? payload.aud : [payload.aud];
  const azp = (payload as { azp?: unknown }).azp;
  if (audiences.length > 1 && azp === undefined) {
    throw refuse(401, 'This launch is for another tool', 'The launch token names several audiences but no authorised party.', 'missing-azp', detail);
  }
  if (azp !== undefined && azp !== platform.clientId) {
    throw refuse(401, 'This launch is for another tool', 'The launch token’s authorised party is not Loadline’s client id.', 'wrong-azp', detail);
  }
  if (payload.nonce !== stored.nonce) throw refuse(401, 'This launch does not match its login', 'The launch token’s nonce is not the one Loadline sent.', 'wrong-nonce', detail);
  if (!(await consumeState(db, state, now))) {
    throw refuse(401, 'This launch was used already', 'This launch (its state and nonce) has been used once; a launch works only once.', 'replayed-nonce', detail);
  }

  const deploymentId = payload[CLAIM.deploymentId];
  if (typeof deploymentId !== 'string' || deploymentId === '') {
    throw refuse(400, 'This launch names no deployment', 'The launch token has no deployment id.', 'missing-deployment', detail);
  }
  if (!(await hasDeployment(db, platform.id, deploymentId))) {
    throw refuse(403, 'This deployment is not registered', `Deployment “${deploymentId}” of this platform is not registered with Loadline; the program admin adds it on the platform's registration.`, 'unknown-deployment', {
      ...detail,
      deploymentId,
    });
  }
  if (payload[CLAIM.roles] === undefined) {
    throw refuse(400, 'This launch does not say who you are in the course', 'The launch token has no roles claim, so Loadline cannot tell a student from an instructor.', 'missing-roles', detail);
  }
  if (payload[CLAIM.version] !== '1.3.0') {
    throw refuse(400, 'This launch is not LTI 1.3', `The launch token's LTI version is “${String(payload[CLAIM.version] ?? 'missing')}”, not 1.3.0.`, 'bad-version', detail);
  }
  const type = payload[CLAIM.messageType];
  if (type !== MESSAGE.resourceLink && type !== MESSAGE.deepLinkingRequest) {
    throw refuse(400, 'Loadline cannot open this kind of launch', `The launch's message type “${String(type ?? 'missing')}” is not a resource link or a deep-linking request.`, 'bad-message-type', detail);
  }
  const claims = launchClaimsSchema.safeParse(payload);
  if (!claims.success) {
    const issue = claims.error.issues[0];
    const path = issue?.path.map(String).join('.') ?? 'claims';
    throw refuse(400, 'This launch is missing something Loadline needs', `The launch token's “${path}” is missing or malformed (${issue?.message ?? 'invalid'}).`, 'bad-claims', { ...detail, path });
  }
  if (type === MESSAGE.resourceLink && !claims.data[CLAIM.resourceLink]) {
    throw refuse(400, 'This launch names no link', 'A resource-link launch must carry its resource link claim.', 'missing-resource-link', detail);
  }
  if (type === MESSAGE.deepLinkingRequest && !claims.data[CLAIM.deepLinkingSettings]) {
    throw refuse(400, 'This request names no return address', 'A deep-linking request must carry its deep-linking settings.', 'missing-deep-linking-settings', detail);
  }
  if (!claims.data[CLAIM.context]) {
    throw refuse(400, 'This launch is not from a course', 'Loadline opens from a course (the launch has no context claim), so it cannot tell which class this is.', 'missing-context', detail);
  }
  return { platform, claims: claims.data, deploymentId, messageType: type };
}
