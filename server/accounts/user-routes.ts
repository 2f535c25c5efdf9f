import { and, asc, desc, eq, ilike, or, type SQL } from 'drizzle-orm';
import { createUserSchema, listUsersQuerySchema, updateUserSchema, userIdParamsSchema, type User } from '../../shared/api/users.ts';
import { currentUser } from './guard.ts';
import { forgetSessionsOf } from './session.ts';
import { hashPassword } from './passwords.ts';
import type { AppContext } from '../context.ts';
import { outbox, users } from '../db/schema.ts';
import { conflict, HttpError, notFound } from '../http/errors.ts';
import { routeGroup } from '../http/route-table.ts';
import { parseBody, parseParams, parseQuery } from '../http/validate.ts';
import { sendPasswordLink } from './invitations.ts';

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

export function userRoutes(ctx: AppContext) {
  const g = routeGroup('/api/users');

  g.get('/', ['admin'], async (req, res) => {
    const q = parseQuery(listUsersQuerySchema, req);
    const filters: SQL[] = [];
    if (q.role) filters.push(eq(users.role, q.role));
    if (q.q) {
      const like = `%${q.q.replace(/[%_\\]/g, (c) => `\\${c}`)}%`;
      const match = or(ilike(users.name, like), ilike(users.email, like));
      if (match) filters.push(match);
    }
    const rows = await ctx.db
      .select(userColumns)
      .from(users)
      .where(filters.length ? and(...filters) : undefined)
      .orderBy(asc(users.role), asc(users.name));
    res.json({ users: rows.map(toUser) });
  });

  g.post('/', ['admin'], async (req, res) => {
    const input = parseBody(createUserSchema, req);
    const passwordHash = input.password ? await hashPassword(input.password) : null;
    let row: UserRow | undefined;
    try {
      [row] = await ctx.db.insert(users).values({ email: input.email, name: input.name, role: input.role, passwordHash }).returning(userColumns);
    } catch (err) {
      if (isUniqueViolation(err)) throw conflict('A user with this e-mail already exists', 'email');
      throw err;
    }
    if (!row) throw new HttpError(500, 'User was not created');
    let invited = false;
    if (!passwordHash) {
      await sendPasswordLink(ctx, row, 'invite');
      invited = true;
    }
    res.status(201).json({ user: toUser(row), invited });
  });

  g.patch('/:id', ['admin'], async (req, res) => {
    const { id } = parseParams(userIdParamsSchema, req);
    const input = parseBody(updateUserSchema, req);
    const me = currentUser(req);
    if (id === me.id && (input.disabled === true || (input.role && input.role !== 'admin'))) {
      throw new HttpError(400, 'You cannot disable yourself or give up your own admin role', { field: input.disabled ? 'disabled' : 'role' });
    }
    const [row] = await ctx.db
      .update(users)
      .set({ ...input, updatedAt: new Date() })
      .where(eq(users.id, id))
      .returning(userColumns);
    if (!row) throw notFound('No such user');
    // A disabled account or a changed role counts from this process's very next request.
    forgetSessionsOf(ctx.pool, id);
    res.json({ user: toUser(row) });
  });

  g.post('/:id/invite', ['admin'], async (req, res) => {
    const { id } = parseParams(userIdParamsSchema, req);
    const [row] = await ctx.db.select(userColumns).from(users).where(eq(users.id, id));
    if (!row) throw notFound('No such user');
    await sendPasswordLink(ctx, row, 'invite');
    res.status(202).json({ message: `Invitation sent to ${row.email}` });
  });

  return g;
}

export function outboxRoutes(ctx: AppContext) {
  const g = routeGroup('/api/outbox');
  g.get('/', ['admin'], async (_req, res) => {
    const rows = await ctx.db
      .select({ id: outbox.id, to: outbox.toAddress, subject: outbox.subject, body: outbox.body, status: outbox.status, sentAt: outbox.sentAt, createdAt: outbox.createdAt })
      .from(outbox)
      .orderBy(desc(outbox.id))
      .limit(200);
    res.json({
      messages: rows.map((m) => ({ ...m, sentAt: m.sentAt?.toISOString() ?? null, createdAt: m.createdAt.toISOString() })),
    });
  });
  return g;
}
