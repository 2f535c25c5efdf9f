import connectPgSimple from 'connect-pg-simple';
import session from 'express-session';
import { sql, type SQL } from 'drizzle-orm';
import type { RequestHandler } from 'express';
import type pg from 'pg';
import type { Role } from '../../shared/api/auth.ts';
import { Lru } from '../db/scoped-cache.ts';
import { isMissingDatabaseSocket } from '../http/errors.ts';
import { SESSION_CHANNEL, USER_CHANNEL, type LiveBus } from '../db/live-bus.ts';

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

/**
 * A kept session is read again from the database after this long even when
 * no notification said it changed: the bound on how stale a kept session can
 * be, were a notification ever lost without the connection dropping.
 */
export const SESSION_KEPT_MS = 60_000;

interface KeptSession {
  /** The stored record as JSON: each request gets its own copy, which express-session then changes. */
  text: string;
  user: PreloadedUser;
  expireMs: number;
  readAt: number;
  /** The listening connection's life this was read in (see `SessionCache`). */
  epoch: number;
}

/**
 * The sessions this process has read, with their users, so a signed-in
 * request usually needs no session read at all. A kept session is used only
 * while the process listens for the database's notifications (migration
 * `session-notify`): a session ended, rewritten or cut short, or an account
 * changed, by any process or by hand, is forgotten when its notification
 * arrives, within milliseconds. Changes this process makes itself are
 * forgotten at once (destroy, set, forgetUser). While the listening
 * connection is down every read goes to the database, and what was kept
 * before a reconnect is never used after it, since notifications may have
 * been missed meanwhile.
 */
export class SessionCache {
  private readonly kept: Lru<string, KeptSession>;
  private epoch = 0;
  private listening = false;

  constructor(
    private readonly bus: LiveBus,
    private readonly now: () => number,
    max = TOUCHED_KEPT,
  ) {
    this.kept = new Lru(max);
  }

  /** Starts listening (once); until the LISTEN is in place nothing is kept. */
  private listen(): void {
    if (this.listening) return;
    this.listening = true;
    this.bus.onReconnect(() => {
      this.epoch++;
      this.kept.clear();
    });
    void Promise.all([
      this.bus.subscribe(SESSION_CHANNEL, (sid) => this.kept.delete(sid)),
      this.bus.subscribe(USER_CHANNEL, (id) => this.forgetUser(Number(id))),
    ]).catch(() => undefined);
  }

  /** The epoch to keep a read under, or null when a read starting now must not be kept. */
  readStarts(): number | null {
    this.listen();
    return this.bus.connected() ? this.epoch : null;
  }

  keep(sid: string, entry: Omit<KeptSession, 'epoch' | 'readAt'>, epoch: number | null): void {
    if (epoch === null || epoch !== this.epoch || !this.bus.connected()) return;
    this.kept.set(sid, { ...entry, epoch, readAt: this.now() });
  }

  get(sid: string): KeptSession | null {
    const hit = this.kept.get(sid);
    if (!hit) return null;
    const t = this.now();
    if (hit.epoch !== this.epoch || !this.bus.connected() || t - hit.readAt > SESSION_KEPT_MS || t >= hit.expireMs) {
      this.kept.delete(sid);
      return null;
    }
    return hit;
  }

  forget(sid: string): void {
    this.kept.delete(sid);
  }

  forgetUser(userId: number): void {
    this.kept.deleteWhere((k) => k.user.id === userId);
  }
}

/**
 * A failed session read as express-session must take it. It reads an error
 * coded ENOENT as "no such session" and carries on signed out; but ENOENT is
 * also what connecting to a stopped PostgreSQL through its Unix socket gives
 * (the socket file is gone). That is the database being away, not the session:
 * the request must fail (503), not lose its sign-in.
 */
function unavailable(err: unknown): unknown {
  if (!isMissingDatabaseSocket(err)) return err;
  return Object.assign(new Error(`The database is unavailable: ${(err as Error).message}`, { cause: err }), { code: 'ECONNREFUSED' });
}

/** The session cache of each app's store, by the app's pool, so account changes can reach it. */
const cachesByPool = new WeakMap<pg.Pool, SessionCache>();

/** Forgets this process's kept sessions of a user whose account just changed (other processes hear of it from the database). */
export function forgetSessionsOf(pool: pg.Pool, userId: number): void {
  cachesByPool.get(pool)?.forgetUser(userId);
}

/**
 * Ends every session of the user but `keepSid` (the request's own, when it
 * is theirs): after their password is set, a session someone else holds
 * must not outlive the old password. Run it in the transaction that sets the
 * password; each deleted row notifies every process (migration
 * `session-notify`), and the caller forgets this process's at once
 * (`forgetSessionsOf`) after the commit.
 */
export async function endSessionsOf(db: { execute(query: SQL): Promise<unknown> }, userId: number, keepSid: string | null): Promise<void> {
  await db.execute(sql`delete from session where sess->>'userId' = ${String(userId)} and sid <> ${keepSid ?? ''}`);
}

/**
 * connect-pg-simple's store, with the stored expiry touched at most every
 * `touchEveryMs` per session and process, and, given the app's live bus, the
 * sessions read kept (SessionCache).
 */
export function throttledPgStore(opts: { pool: pg.Pool; touchEveryMs?: number; now?: () => number; bus?: LiveBus }): session.Store {
  const PgStore = connectPgSimple(session);
  const every = opts.touchEveryMs ?? SESSION_TOUCH_EVERY_MS;
  const now = opts.now ?? Date.now;
  const touchedAt = new Lru<string, number>(TOUCHED_KEPT);
  const remember = (sid: string) => touchedAt.set(sid, now());
  const preloaded = new Lru<string, { user: PreloadedUser; at: number }>(TOUCHED_KEPT);
  const cache = opts.bus ? new SessionCache(opts.bus, now) : null;
  if (cache) cachesByPool.set(opts.pool, cache);
  class ThrottledStore extends PgStore implements UserPreloadingStore {
    override get(sid: string, fn: (err: unknown, session?: SessionRecord | null) => void): void {
      const hit = cache?.get(sid);
      if (hit) {
        preloaded.set(sid, { user: hit.user, at: now() });
        return fn(null, JSON.parse(hit.text) as SessionRecord);
      }
      const epoch = cache?.readStarts() ?? null;
      // The session and its user in one named statement: every API request not served from the cache makes this read.
      opts.pool
        .query<{ sess: SessionRecord | string; expiresInMs: number; id: number | null; email: string; name: string; role: Role; disabled: boolean }>({
          name: 'session-get-with-user',
          text: `select s.sess, (extract(epoch from s.expire - localtimestamp) * 1000)::float8 as "expiresInMs", u.id, u.email, u.name, u.role, u.disabled
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
              const user = { id: row.id, email: row.email, name: row.name, role: row.role, disabled: row.disabled };
              preloaded.set(sid, { user, at: now() });
              cache?.keep(sid, { text: JSON.stringify(sess), user, expireMs: now() + row.expiresInMs }, epoch);
            }
            fn(null, sess);
          },
          (err: unknown) => fn(unavailable(err)),
        );
    }
    takeUser(sid: string): PreloadedUser | null {
      const hit = preloaded.get(sid);
      preloaded.delete(sid);
      return hit && now() - hit.at <= PRELOAD_FRESH_MS ? hit.user : null;
    }
    override set(sid: string, sess: SessionRecord, fn?: Callback): void {
      cache?.forget(sid);
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
      cache?.forget(sid);
      touchedAt.delete(sid);
      preloaded.delete(sid);
      super.destroy(sid, fn);
    }
  }
  // The table is made by a migration, never at run time.
  return new ThrottledStore({ pool: opts.pool, tableName: 'session', createTableIfMissing: false, pruneSessionInterval: 15 * 60 });
}

export function sessionMiddleware(opts: { pool: pg.Pool; secret: string; secure: boolean; store?: session.Store; bus?: LiveBus }): RequestHandler {
  return session({
    name: SESSION_COOKIE,
    secret: opts.secret,
    store: opts.store ?? throttledPgStore({ pool: opts.pool, bus: opts.bus }),
    resave: false,
    saveUninitialized: false,
    rolling: true,
    cookie: { httpOnly: true, sameSite: 'lax', secure: opts.secure, maxAge: SESSION_MAX_AGE_MS },
  });
}
