/**
 * A platform's person (its issuer and their subject) and the Loadline account
 * they are. The match is by platform and subject only, never by e-mail: an
 * e-mail a platform asserts is not proof of owning the Loadline account that
 * has it. A new person gets a new account with the role the platform gave
 * them, and the platform's e-mail only when no account has it yet.
 */
import { createHash } from 'node:crypto';
import { and, eq, sql } from 'drizzle-orm';
import { emailSchema, type Role } from '../../shared/api/auth.ts';
import type { DbOrTx } from '../db/client.ts';
import { users } from '../db/schema.ts';
import { ltiAccounts } from './tables.ts';

export interface Person {
  subject: string;
  name?: string | undefined;
  givenName?: string | undefined;
  familyName?: string | undefined;
  email?: string | undefined;
}

export type AccountOutcome =
  | { kind: 'ok'; userId: number; role: Role; name: string; created: boolean; renamed: boolean }
  | { kind: 'role-mismatch'; userId: number; accountRole: Role }
  | { kind: 'disabled'; userId: number };

/** The name to show: the platform's full name, or given and family names, or a placeholder from the subject. */
export function displayName(p: Person): string {
  const clean = (s: string | undefined) => (s ?? '').replace(/\s+/g, ' ').trim();
  const full = clean(p.name) || clean(`${clean(p.givenName)} ${clean(p.familyName)}`);
  // eslint-disable-next-line no-control-regex -- control characters are what this drops
  const safe = full.replace(/[\u0000-\u001f\u007f]/g, '').slice(0, 120).trim();
  return safe || `Course member ${createHash('sha256').update(p.subject).digest('hex').slice(0, 6)}`;
}

/** The platform's e-mail when it is valid and free, else an address of our own that mails nobody. */
async function emailFor(db: DbOrTx, platformId: number, p: Person): Promise<string> {
  const given = emailSchema.safeParse(p.email ?? '');
  if (given.success) {
    const [taken] = await db.select({ id: users.id }).from(users).where(sql`lower(${users.email}) = ${given.data}`);
    if (!taken) return given.data;
  }
  return `lti-${platformId}-${createHash('sha256').update(p.subject).digest('hex').slice(0, 20)}@lti.loadline.invalid`;
}

/** Whether an account of this role may act as `wanted` (an admin may teach). */
const fits = (accountRole: Role, wanted: 'instructor' | 'student') => accountRole === wanted || (wanted === 'instructor' && accountRole === 'admin');

/** Finds or makes the account of a platform's person; run inside the caller's transaction. */
export async function accountOf(db: DbOrTx, platformId: number, person: Person, role: 'instructor' | 'student', now = new Date()): Promise<AccountOutcome> {
  const name = displayName(person);
  const [linked] = await db
    .select({ userId: users.id, role: users.role, name: users.name, disabled: users.disabled })
    .from(ltiAccounts)
    .innerJoin(users, eq(users.id, ltiAccounts.userId))
    .where(and(eq(ltiAccounts.platformId, platformId), eq(ltiAccounts.subject, person.subject)));
  if (linked) {
    if (linked.disabled) return { kind: 'disabled', userId: linked.userId };
    if (!fits(linked.role, role)) return { kind: 'role-mismatch', userId: linked.userId, accountRole: linked.role };
    const hasName = !!(person.name || person.givenName || person.familyName);
    const renamed = hasName && linked.name !== name;
    if (renamed) await db.update(users).set({ name, updatedAt: now }).where(eq(users.id, linked.userId));
    return { kind: 'ok', userId: linked.userId, role: linked.role, name: renamed ? name : linked.name, created: false, renamed };
  }
  const [made] = await db
    .insert(users)
    .values({ email: await emailFor(db, platformId, person), name, role })
    .returning({ id: users.id });
  await db.insert(ltiAccounts).values({ platformId, subject: person.subject, userId: made!.id });
  return { kind: 'ok', userId: made!.id, role, name, created: true, renamed: false };
}

export async function markLaunched(db: DbOrTx, platformId: number, subject: string, now = new Date()): Promise<void> {
  await db
    .update(ltiAccounts)
    .set({ lastLaunchAt: now })
    .where(and(eq(ltiAccounts.platformId, platformId), eq(ltiAccounts.subject, subject)));
}

/** The account a handoff signs in, unless it has been disabled meanwhile. */
export async function activeUser(db: DbOrTx, userId: number): Promise<{ id: number; email: string; name: string; role: Role } | null> {
  const [row] = await db.select({ id: users.id, email: users.email, name: users.name, role: users.role, disabled: users.disabled }).from(users).where(eq(users.id, userId));
  if (!row || row.disabled) return null;
  return { id: row.id, email: row.email, name: row.name, role: row.role };
}
