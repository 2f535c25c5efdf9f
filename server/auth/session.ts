import connectPgSimple from 'connect-pg-simple';
import session from 'express-session';
import type { RequestHandler } from 'express';
import type pg from 'pg';
import type { Role } from '../../shared/api/auth.ts';
import { Lru } from '../db/scoped-cache.ts';

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

/** The signed-in user's row as the session read found it. */
export interface PreloadedUser {
  id: number;
  email: string;
  name: string;
  role: Role;
  disabled: boolean;
}

/** A store that reads the session's user in the same query as the session; `takeUser` hands it to this request's user check. */
export interface UserPreloadingStore {
  takeUser(sid: string): PreloadedUser | null;
}

/** A preloaded user is for the request that read it, within this long. */
const PRELOAD_FRESH_MS = 2_000;

/** connect-pg-simple's store, with the stored expiry touched at most every `touchEveryMs` per session and process. */
export function throttledPgStore(opts: { pool: pg.Pool; touchEveryMs?: number; now?: () => number }): session.Store {
  const PgStore = connectPgSimple(session);
  const every = opts.touchEveryMs ?? SESSION_TOUCH_EVERY_MS;
  const now = opts.now ?? Date.now;
  const touchedAt = new Lru<string, number>(TOUCHED_KEPT);
  const remember = (sid: string) => touchedAt.set(sid, now());
  const preloaded = new Lru<string, { user: PreloadedUser; at: number }>(TOUCHED_KEPT);
  class ThrottledStore extends PgStore implements UserPreloadingStore {
    override get(sid: string, fn: (err: unknown, session?: SessionRecord | null) => void): void {
      // The session and its user in one named statement: every API request makes this read.
      opts.pool
        .query<{ sess: SessionRecord | string; id: number | null; email: string; name: string; role: Role; disabled: boolean }>({
          name: 'session-get-with-user',
          text: `select s.sess, u.id, u.email, u.name, u.role, u.disabled
                   from session s
                   left join users u on u.id = case when s.sess->>'userId' ~ '^[0-9]{1,9}$' then (s.sess->>'userId')::int end
                  where s.sid = $1 and s.expire >= now()`,
          values: [sid],
        })
        .then(
          ({ rows }) => {
            const row = rows[0];
            if (!row) return fn(null, null);
            let sess: SessionRecord;
            try {
              sess = typeof row.sess === 'string' ? (JSON.parse(row.sess) as SessionRecord) : row.sess;
            } catch {
              return this.destroy(sid, (err) => fn(err ?? null, null));
            }
            if (row.id !== null) {
              preloaded.set(sid, { user: { id: row.id, email: row.email, name: row.name, role: row.role, disabled: row.disabled }, at: now() });
            }
            fn(null, sess);
          },
          (err: unknown) => fn(err),
        );
    }
    takeUser(sid: string): PreloadedUser | null {
      const hit = preloaded.get(sid);
      preloaded.delete(sid);
      return hit && now() - hit.at <= PRELOAD_FRESH_MS ? hit.user : null;
    }
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
      preloaded.delete(sid);
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
