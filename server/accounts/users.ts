/** Accounts' queries: the admin's list of users, creating and changing an account, and reading one by e-mail or id. */
import { and, asc, eq, ilike, or, sql, type SQL } from 'drizzle-orm';
import type { Role } from '../../shared/api/auth.ts';
import type { CreateUserInput, UpdateUserInput, User } from '../../shared/api/users.ts';
import type { Db, DbOrTx } from '../db/client.ts';
import { users } from '../db/schema.ts';
import { conflict, HttpError } from '../http/errors.ts';
import { endSessionsOf } from './session.ts';
import { consumeToken, endTokensOf } from './tokens.ts';

const userColumns = {
  id: users.id,
  email: users.email,
  name: users.name,
  role: users.role,
  disabled: users.disabled,
  passwordHash: users.passwordHash,
  createdAt: users.createdAt,
};

type UserRow = { id: number; email: string; name: string; role: User['role']; disabled: boolean; passwordHash: string | null; createdAt: Date };

export function toUser(row: UserRow): User {
  return {
    id: row.id,
    email: row.email,
    name: row.name,
    role: row.role,
    disabled: row.disabled,
    hasPassword: row.passwordHash !== null,
    createdAt: row.createdAt.toISOString(),
  };
}

const isUniqueViolation = (err: unknown) => (err as { code?: string }).code === '23505' || (err as { cause?: { code?: string } }).cause?.code === '23505';

/** Users by role and a search of name or e-mail (the admin's list). */
export async function listUsers(db: DbOrTx, q: { role?: Role; q?: string }): Promise<User[]> {
  const filters: SQL[] = [];
  if (q.role) filters.push(eq(users.role, q.role));
  if (q.q) {
    const like = `%${q.q.replace(/[%_\\]/g, (c) => `\\${c}`)}%`;
    const match = or(ilike(users.name, like), ilike(users.email, like));
    if (match) filters.push(match);
  }
  const rows = await db
    .select(userColumns)
    .from(users)
    .where(filters.length ? and(...filters) : undefined)
    .orderBy(asc(users.role), asc(users.name));
  return rows.map(toUser);
}

/** Creates an account; a taken e-mail is a 409. */
export async function createUser(db: DbOrTx, input: Pick<CreateUserInput, 'email' | 'name' | 'role'>, passwordHash: string | null): Promise<UserRow> {
  let row: UserRow | undefined;
  try {
    [row] = await db.insert(users).values({ email: input.email, name: input.name, role: input.role, passwordHash }).returning(userColumns);
  } catch (err) {
    if (isUniqueViolation(err)) throw conflict('A user with this e-mail already exists', 'email');
    throw err;
  }
  if (!row) throw new HttpError(500, 'User was not created');
  return row;
}

/** Changes an account; null when there is none. */
export async function updateUser(db: DbOrTx, id: number, input: UpdateUserInput): Promise<UserRow | null> {
  const [row] = await db
    .update(users)
    .set({ ...input, updatedAt: new Date() })
    .where(eq(users.id, id))
    .returning(userColumns);
  return row ?? null;
}

export async function userById(db: DbOrTx, id: number): Promise<UserRow | null> {
  const [row] = await db.select(userColumns).from(users).where(eq(users.id, id));
  return row ?? null;
}

/** The account that signs in with this e-mail (compared in lower case), with its password hash. */
export async function accountForSignIn(db: DbOrTx, email: string) {
  const [row] = await db
    .select({ id: users.id, email: users.email, name: users.name, role: users.role, passwordHash: users.passwordHash, disabled: users.disabled })
    .from(users)
    .where(sql`lower(${users.email}) = ${email}`);
  return row ?? null;
}

/** The account a reset link for this e-mail would go to. */
export async function accountForReset(db: DbOrTx, email: string) {
  const [row] = await db
    .select({ id: users.id, email: users.email, name: users.name, disabled: users.disabled })
    .from(users)
    .where(sql`lower(${users.email}) = ${email}`);
  return row ?? null;
}

/**
 * Sets the password of a link's account: the token is used up, every other
 * link of theirs stops working and every other session of theirs ends (but
 * `keepSid`). Null when the link has expired or was used.
 */
export async function setPasswordByToken(db: Db, token: string, passwordHash: string, keepSid: (userId: number) => string | null): Promise<number | null> {
  return db.transaction(async (tx) => {
    const found = await consumeToken(tx, token);
    if (!found) return null;
    await tx.update(users).set({ passwordHash, updatedAt: new Date() }).where(eq(users.id, found.userId));
    await endTokensOf(tx, found.userId);
    await endSessionsOf(tx, found.userId, keepSid(found.userId));
    return found.userId;
  });
}

export async function emailOf(db: DbOrTx, userId: number): Promise<string | null> {
  const [account] = await db.select({ email: users.email }).from(users).where(eq(users.id, userId));
  return account?.email ?? null;
}
