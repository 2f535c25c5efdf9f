/**
 * Access tokens for a platform's services (grades, rosters): the OAuth 2
 * client-credentials grant with a JWT assertion signed by Loadline's current
 * key. 1EdTech Security Framework 1.0 §4.1 (client credentials with a JWT
 * bearer assertion: iss and sub the client id, aud the token endpoint, a
 * unique jti, a short exp). Tokens are kept per platform and scopes until a
 * minute before they expire.
 */
import { randomUUID } from 'node:crypto';
import type { Db } from '../db/client.ts';
import { signWithCurrentKey } from './keys.ts';
import type { PlatformRow } from './platforms.ts';

export const SERVICE_TIMEOUT_MS = 10_000;

/** A call to a platform's service that failed; `retryable` when trying later may help (the platform away, busy, or a 5xx). */
export class ServiceError extends Error {
  constructor(
    message: string,
    readonly status: number | null,
    readonly retryable: boolean,
  ) {
    super(message);
  }
}

const retryableStatus = (status: number) => status === 408 || status === 425 || status === 429 || status >= 500;

/** fetch with a timeout; a network failure becomes a retryable ServiceError. */
export async function callService(url: string, init: RequestInit, what: string): Promise<Response> {
  let res: Response;
  try {
    res = await fetch(url, { ...init, signal: AbortSignal.timeout(SERVICE_TIMEOUT_MS), redirect: 'error' });
  } catch (err) {
    const cause = (err as { cause?: { code?: string } }).cause?.code ?? (err as Error).name;
    throw new ServiceError(`${what}: the platform could not be reached (${cause})`, null, true);
  }
  if (!res.ok) {
    const body = (await res.text().catch(() => '')).slice(0, 300).replace(/\s+/g, ' ');
    throw new ServiceError(`${what}: the platform answered ${res.status}${body ? ` (${body})` : ''}`, res.status, retryableStatus(res.status));
  }
  return res;
}

interface KeptToken {
  token: string;
  until: number;
}
const tokens = new WeakMap<Db, Map<string, KeptToken>>();

export async function serviceToken(db: Db, platform: PlatformRow, scopes: readonly string[], opts: { fresh?: boolean } = {}): Promise<string> {
  let kept = tokens.get(db);
  if (!kept) {
    kept = new Map();
    tokens.set(db, kept);
  }
  const key = `${platform.id} ${platform.tokenUrl} ${[...scopes].sort().join(' ')}`;
  const hit = kept.get(key);
  if (hit && !opts.fresh && hit.until > Date.now()) return hit.token;

  const assertion = await signWithCurrentKey(db, { iss: platform.clientId, sub: platform.clientId, aud: platform.tokenUrl, jti: randomUUID() });
  const body = new URLSearchParams({
    grant_type: 'client_credentials',
    client_assertion_type: 'urn:ietf:params:oauth:client-assertion-type:jwt-bearer',
    client_assertion: assertion,
    scope: scopes.join(' '),
  });
  const res = await callService(platform.tokenUrl, { method: 'POST', headers: { 'Content-Type': 'application/x-www-form-urlencoded', Accept: 'application/json' }, body }, 'Token request');
  const answer = (await res.json().catch(() => null)) as { access_token?: unknown; expires_in?: unknown } | null;
  if (!answer || typeof answer.access_token !== 'string' || answer.access_token === '') {
    throw new ServiceError('Token request: the platform gave no access token', res.status, false);
  }
  const lifeS = typeof answer.expires_in === 'number' && answer.expires_in > 0 ? answer.expires_in : 3600;
  kept.set(key, { token: answer.access_token, until: Date.now() + Math.max(0, lifeS - 60) * 1000 });
  return answer.access_token;
}

/** Forgets a token the platform refused (401), so the next call asks for a new one. */
export function forgetServiceTokens(db: Db, platformId: number): void {
  const kept = tokens.get(db);
  if (!kept) return;
  for (const key of kept.keys()) if (key.startsWith(`${platformId} `)) kept.delete(key);
}
