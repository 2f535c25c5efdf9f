/**
 * Loadline's own signing keys (RS256), kept in PostgreSQL. One key is current
 * and signs everything Loadline sends a platform (deep-linking answers and the
 * client assertions of the grade and roster services). Rotating makes a new
 * current key; the old one stays in the public key set for RETIRED_KEY_KEPT_MS,
 * longer than any token it signed lives (and than a platform's usual key-set
 * cache), and is then dropped.
 *
 * 1EdTech Security Framework 1.0 §6 (key management: RSA keys of at least
 * 2048 bits, published as a JSON Web Key Set, rotated with the kid naming the key).
 */
import { randomUUID } from 'node:crypto';
import { and, desc, isNotNull, isNull, lt, or, gt, sql } from 'drizzle-orm';
import { exportJWK, generateKeyPair, importJWK, SignJWT, type JWK, type JWTPayload } from 'jose';
import type { SigningKey } from '../../shared/api/lti.ts';
import type { DbOrTx } from '../db/client.ts';
import { ltiKeys } from './tables.ts';

/** The longest any token Loadline signs lives. */
export const SIGNED_TOKEN_TTL_S = 5 * 60;
/** How long a retired key stays published: an hour, well past its last token and a platform's key-set cache. */
export const RETIRED_KEY_KEPT_MS = 60 * 60 * 1000;

const ALG = 'RS256';

async function newKeyRow(): Promise<{ kid: string; publicJwk: JWK; privateJwk: JWK }> {
  const { publicKey, privateKey } = await generateKeyPair(ALG, { modulusLength: 2048, extractable: true });
  const kid = randomUUID();
  const publicJwk = { ...(await exportJWK(publicKey)), kid, alg: ALG, use: 'sig' };
  const privateJwk = { ...(await exportJWK(privateKey)), kid, alg: ALG };
  return { kid, publicJwk, privateJwk };
}

/** The current key, made on first use (two processes racing make one: the index allows one current key). */
async function currentKey(db: DbOrTx): Promise<{ kid: string; privateJwk: JWK }> {
  for (let i = 0; i < 3; i++) {
    const [row] = await db.select({ kid: ltiKeys.kid, privateJwk: ltiKeys.privateJwk }).from(ltiKeys).where(isNull(ltiKeys.retiredAt));
    if (row) return { kid: row.kid, privateJwk: row.privateJwk as JWK };
    await db.insert(ltiKeys).values(await newKeyRow()).onConflictDoNothing();
  }
  throw new Error('no current signing key could be made');
}

/** The public key set: the current key and retired keys still within their grace. */
export async function publicKeySet(db: DbOrTx, now = new Date()): Promise<{ keys: JWK[] }> {
  await currentKey(db);
  const rows = await db
    .select({ publicJwk: ltiKeys.publicJwk })
    .from(ltiKeys)
    .where(or(isNull(ltiKeys.retiredAt), gt(ltiKeys.retiredAt, new Date(now.getTime() - RETIRED_KEY_KEPT_MS))))
    .orderBy(desc(ltiKeys.createdAt));
  return { keys: rows.map((r) => r.publicJwk as JWK) };
}

/** Retires the current key and makes a new one, in one transaction; keys past their grace are deleted. */
export async function rotateKey(db: DbOrTx, now = new Date()): Promise<string> {
  const fresh = await newKeyRow();
  await db.update(ltiKeys).set({ retiredAt: now }).where(isNull(ltiKeys.retiredAt));
  await db.insert(ltiKeys).values(fresh);
  await db.delete(ltiKeys).where(and(isNotNull(ltiKeys.retiredAt), lt(ltiKeys.retiredAt, new Date(now.getTime() - RETIRED_KEY_KEPT_MS))));
  return fresh.kid;
}

export async function listKeys(db: DbOrTx, now = new Date()): Promise<SigningKey[]> {
  await currentKey(db);
  const rows = await db
    .select({ kid: ltiKeys.kid, createdAt: ltiKeys.createdAt, retiredAt: ltiKeys.retiredAt })
    .from(ltiKeys)
    .where(sql`${ltiKeys.retiredAt} is null or ${ltiKeys.retiredAt} > ${new Date(now.getTime() - RETIRED_KEY_KEPT_MS)}`)
    .orderBy(desc(ltiKeys.createdAt));
  return rows.map((r) => ({
    kid: r.kid,
    createdAt: r.createdAt.toISOString(),
    retiredAt: r.retiredAt?.toISOString() ?? null,
    publishedUntil: r.retiredAt ? new Date(r.retiredAt.getTime() + RETIRED_KEY_KEPT_MS).toISOString() : null,
    current: r.retiredAt === null,
  }));
}

/** A JWT signed with the current key (kid in the header), living SIGNED_TOKEN_TTL_S at most. */
export async function signWithCurrentKey(db: DbOrTx, payload: JWTPayload, opts: { ttlS?: number } = {}): Promise<string> {
  const key = await currentKey(db);
  const ttl = Math.min(opts.ttlS ?? SIGNED_TOKEN_TTL_S, SIGNED_TOKEN_TTL_S);
  return new SignJWT(payload)
    .setProtectedHeader({ alg: ALG, kid: key.kid, typ: 'JWT' })
    .setIssuedAt()
    .setExpirationTime(`${ttl}s`)
    .sign(await importJWK(key.privateJwk, ALG));
}
