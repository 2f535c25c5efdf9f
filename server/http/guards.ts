/**
 * Who may call what: every route states its access in the route table, and
 * this is the one place that enforces it, from the user the accounts domain
 * loaded onto the request (accounts/guard.ts). Ownership checks (this class,
 * this attempt) live in accounts/access.ts.
 */
import type { RequestHandler } from 'express';
import type { Role, SessionUser } from '../../shared/api/auth.ts';
import { HttpError } from './errors.ts';

export type Access = 'public' | 'signed-in' | readonly Role[];

declare module 'express-serve-static-core' {
  interface Request {
    user?: SessionUser;
  }
}

export function requireAccess(access: Access): RequestHandler {
  return (req, _res, next) => {
    if (access === 'public') return next();
    if (!req.user) return next(new HttpError(401, 'Sign in first'));
    if (access === 'signed-in' || access.includes(req.user.role)) return next();
    next(new HttpError(403, 'Your role cannot do this'));
  };
}
