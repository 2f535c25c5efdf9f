/** Accounts, for the admin (/api/users): list, create, change, and invite again. */
import { createUserSchema, listUsersQuerySchema, updateUserSchema, userIdParamsSchema } from '../../shared/api/users.ts';
import { currentUser } from './guard.ts';
import { forgetSessionsOf } from './session.ts';
import { hashPassword } from './passwords.ts';
import type { AppContext } from '../context.ts';
import { HttpError, notFound } from '../http/errors.ts';
import { routeGroup } from '../http/route-table.ts';
import { parseBody, parseParams, parseQuery } from '../http/validate.ts';
import { sendPasswordLink } from './invitations.ts';
import { createUser, listUsers, toUser, updateUser, userById } from './users.ts';

export function userRoutes(ctx: AppContext) {
  const g = routeGroup('/api/users');

  g.get('/', ['admin'], async (req, res) => {
    const q = parseQuery(listUsersQuerySchema, req);
    res.json({ users: await listUsers(ctx.db, q) });
  });

  g.post('/', ['admin'], async (req, res) => {
    const input = parseBody(createUserSchema, req);
    const passwordHash = input.password ? await hashPassword(input.password) : null;
    const row = await createUser(ctx.db, input, passwordHash);
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
    const row = await updateUser(ctx.db, id, input);
    if (!row) throw notFound('No such user');
    // A disabled account or a changed role counts from this process's very next request.
    forgetSessionsOf(ctx.pool, id);
    res.json({ user: toUser(row) });
  });

  g.post('/:id/invite', ['admin'], async (req, res) => {
    const { id } = parseParams(userIdParamsSchema, req);
    const row = await userById(ctx.db, id);
    if (!row) throw notFound('No such user');
    await sendPasswordLink(ctx, row, 'invite');
    res.status(202).json({ message: `Invitation sent to ${row.email}` });
  });

  return g;
}
