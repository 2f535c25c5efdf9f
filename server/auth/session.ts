import connectPgSimple from 'connect-pg-simple';
import session from 'express-session';
import type { RequestHandler } from 'express';
import type pg from 'pg';
import type { Role } from '../../shared/api/auth.ts';

declare module 'express-session' {
  interface SessionData {
    userId: number;
    role: Role;
    csrfToken: string;
  }
}

export const SESSION_COOKIE = 'loadline.sid';
export const SESSION_MAX_AGE_MS = 8 * 60 * 60 * 1000;

export function sessionMiddleware(opts: { pool: pg.Pool; secret: string; secure: boolean }): RequestHandler {
  const PgStore = connectPgSimple(session);
  return session({
    name: SESSION_COOKIE,
    secret: opts.secret,
    // The table is made by a migration, never at run time.
    store: new PgStore({ pool: opts.pool, tableName: 'session', createTableIfMissing: false, pruneSessionInterval: 15 * 60 }),
    resave: false,
    saveUninitialized: false,
    rolling: true,
    cookie: { httpOnly: true, sameSite: 'lax', secure: opts.secure, maxAge: SESSION_MAX_AGE_MS },
  });
}
