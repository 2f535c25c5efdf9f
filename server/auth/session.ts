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
/**
 * The stored expiry of a session is pushed on at most this often: a busy
 * bench makes a request a second, and a write per request would cost more
 * than the request itself. The idle timeout is thus between
 * SESSION_MAX_AGE_MS - SESSION_TOUCH_EVERY_MS and SESSION_MAX_AGE_MS.
 */
export const SESSION_TOUCH_EVERY_MS = 5 * 60 * 1000;
const TOUCHED_KEPT = 50_000;

type SessionRecord = session.SessionData & { cookie: session.Cookie };
type Callback = (err?: unknown) => void;

/** connect-pg-simple's store, with the stored expiry touched at most every `touchEveryMs` per session and process. */
export function throttledPgStore(opts: { pool: pg.Pool; touchEveryMs?: number; now?: () => number }): session.Store {
  const PgStore = connectPgSimple(session);
  const every = opts.touchEveryMs ?? SESSION_TOUCH_EVERY_MS;
  const now = opts.now ?? Date.now;
  const touchedAt = new Map<string, number>();
  const remember = (sid: string) => {
    touchedAt.delete(sid);
    if (touchedAt.size >= TOUCHED_KEPT) {
      const oldest = touchedAt.keys().next();
      if (!oldest.done) touchedAt.delete(oldest.value);
    }
    touchedAt.set(sid, now());
  };
  class ThrottledStore extends PgStore {
    override set(sid: string, sess: SessionRecord, fn?: Callback): void {
      super.set(sid, sess, (err?: unknown) => {
        if (!err) remember(sid);
        fn?.(err);
      });
    }
    override touch(sid: string, sess: SessionRecord, fn?: Callback): void {
      const last = touchedAt.get(sid);
      if (last !== undefined && now() - last < every) {
        fn?.();
        return;
      }
      super.touch(sid, sess, (err?: unknown) => {
        if (!err) remember(sid);
        fn?.(err);
      });
    }
    override destroy(sid: string, fn?: Callback): void {
      touchedAt.delete(sid);
      super.destroy(sid, fn);
    }
  }
  // The table is made by a migration, never at run time.
  return new ThrottledStore({ pool: opts.pool, tableName: 'session', createTableIfMissing: false, pruneSessionInterval: 15 * 60 });
}

export function sessionMiddleware(opts: { pool: pg.Pool; secret: string; secure: boolean; store?: session.Store }): RequestHandler {
  return session({
    name: SESSION_COOKIE,
    secret: opts.secret,
    store: opts.store ?? throttledPgStore({ pool: opts.pool }),
    resave: false,
    saveUninitialized: false,
    rolling: true,
    cookie: { httpOnly: true, sameSite: 'lax', secure: opts.secure, maxAge: SESSION_MAX_AGE_MS },
  });
}
