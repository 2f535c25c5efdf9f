/**
 * Single-use, expiring tokens for invitations and password resets. Only a
 * SHA-256 of the token is stored. A user has at most one token that works:
 * a new one ends the ones before it, and setting a password ends them all.
 */
import { createHash, randomBytes } from 'node:crypto';
import { and, eq, gt, isNull } from 'drizzle-orm';
import type { DbOrTx } from '../db/client.ts';
import { passwordTokens } from '../db/schema.ts';

export type TokenPurpose = 'invite' | 'reset';

export const TOKEN_TTL_MS: Record<TokenPurpose, number> = {
  invite: 7 * 24 * 60 * 60 * 1000,
  reset: 60 * 60 * 1000,
};

const digest = (raw: string) => createHash('sha256').update(raw).digest('hex');

/** Ends every token of the user that still works (marks it used). */
export async function endTokensOf(db: DbOrTx, userId: number): Promise<void> {
  await db
    .update(passwordTokens)
    .set({ usedAt: new Date() })
    .where(and(eq(passwordTokens.userId, userId), isNull(passwordTokens.usedAt)));
}

/** A new token for the user; any earlier link of theirs stops working. */
export async function issueToken(db: DbOrTx, userId: number, purpose: TokenPurpose): Promise<string> {
  const raw = randomBytes(32).toString('base64url');
  await endTokensOf(db, userId);
  await db.insert(passwordTokens).values({
    userId,
    purpose,
    tokenHash: digest(raw),
    expiresAt: new Date(Date.now() + TOKEN_TTL_MS[purpose]),
  });
  return raw;
}

/** Marks the token used and returns its user, or null when it is unknown, used or expired. */
export async function consumeToken(db: DbOrTx, raw: string): Promise<{ userId: number; purpose: TokenPurpose } | null> {
  const [row] = await db
    .update(passwordTokens)
    .set({ usedAt: new Date() })
    .where(and(eq(passwordTokens.tokenHash, digest(raw)), isNull(passwordTokens.usedAt), gt(passwordTokens.expiresAt, new Date())))
    .returning({ userId: passwordTokens.userId, purpose: passwordTokens.purpose });
  return row ? { userId: row.userId, purpose: row.purpose as TokenPurpose } : null;
}
