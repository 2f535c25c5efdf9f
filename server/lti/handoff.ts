/**
 * Handing a verified launch to a browser session. The launch's own answer
 * sets no cookie: it redirects to /lti/enter with a one-time token, a
 * same-site request even inside the platform's frame, which signs in (a new
 * session id) and sets the cookie there. A second one-time token goes with
 * the redirect to /lti/entered: if the cookie came back, it is dropped and the
 * person lands where the launch leads; if the browser kept the cookie out (a
 * frame that blocks third-party cookies), it opens the same launch in a
 * window of its own. Tokens live two minutes, work once and are stored only
 * as hashes.
 */
import { and, eq, gt, isNull, lt } from 'drizzle-orm';
import type { DbOrTx } from '../db/client.ts';
import { hashOf, randomToken } from './login.ts';
import { ltiHandoffs } from './tables.ts';

export const HANDOFF_TTL_MS = 2 * 60 * 1000;

export async function createHandoff(db: DbOrTx, userId: number, target: string, now = new Date()): Promise<string> {
  const token = randomToken();
  await db.delete(ltiHandoffs).where(lt(ltiHandoffs.expiresAt, new Date(now.getTime() - HANDOFF_TTL_MS)));
  await db.insert(ltiHandoffs).values({ tokenHash: hashOf(token), userId, target, expiresAt: new Date(now.getTime() + HANDOFF_TTL_MS) });
  return token;
}

/** Uses a token: its user and target, or null when it is unknown, spent or expired. */
export async function consumeHandoff(db: DbOrTx, token: string, now = new Date()): Promise<{ userId: number; target: string } | null> {
  const [row] = await db
    .update(ltiHandoffs)
    .set({ usedAt: now })
    .where(and(eq(ltiHandoffs.tokenHash, hashOf(token)), isNull(ltiHandoffs.usedAt), gt(ltiHandoffs.expiresAt, now)))
    .returning({ userId: ltiHandoffs.userId, target: ltiHandoffs.target });
  return row ?? null;
}

/** Reads a token without using it. */
export async function peekHandoff(db: DbOrTx, token: string, now = new Date()): Promise<{ userId: number; target: string } | null> {
  const [row] = await db
    .select({ userId: ltiHandoffs.userId, target: ltiHandoffs.target })
    .from(ltiHandoffs)
    .where(and(eq(ltiHandoffs.tokenHash, hashOf(token)), isNull(ltiHandoffs.usedAt), gt(ltiHandoffs.expiresAt, now)));
  return row ?? null;
}
