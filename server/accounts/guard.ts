/**
 * Who is calling: the signed-in user, loaded on every request. The access
 * rule each route states is enforced by http/guards.ts; ownership checks
 * (this class, this attempt) live beside this file in access.ts.
 */
import { eq } from 'drizzle-orm';
import type { Request, RequestHandler } from 'express';
import type { SessionUser } from '../../shared/api/auth.ts';
import type { Db } from '../db/client.ts';
import { users } from '../db/schema.ts';
import { HttpError } from '../http/errors.ts';
import type { UserPreloadingStore } from './session.ts';

export function currentUser(req: Request): SessionUser {
  if (!req.user) throw new HttpError(401, 'Sign in first');
  return req.user;
}

/** Loads the signed-in user on every request, so a disabled account or changed role takes effect at once. */
export function loadUser(db: Db): RequestHandler {
  return async (req, _res, next) => {
    const id = req.session?.userId;
    if (!id) return next();
    // Usually read with the session already (session.ts); else read here.
    const store = req.sessionStore as Partial<UserPreloadingStore> | undefined;
    const preloaded = store?.takeUser?.(req.sessionID) ?? null;
    const [row] =
      preloaded && preloaded.id === id
        ? [preloaded]
        : await db
            .select({ id: users.id, email: users.email, name: users.name, role: users.role, disabled: users.disabled })
            .from(users)
            .where(eq(users.id, id));
    if (!row || row.disabled) {
      // The account is gone or disabled: the request continues as anonymous, on a fresh session.
      await new Promise<void>((resolve, reject) => req.session.regenerate((err) => (err ? reject(err) : resolve())));
      return next();
    }
    req.user = { id: row.id, email: row.email, name: row.name, role: row.role };
    next();
  };
}
