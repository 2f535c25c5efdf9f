/**
 * Rate-limit counters in PostgreSQL, so every server process behind one
 * address counts the same client together: a store for express-rate-limit
 * (limits on every request of a kind), and `PgCounter` for limits the route
 * itself counts (failed sign-ins, links that did not work), each a fixed
 * window that starts at its first hit.
 */
import { createHash } from 'node:crypto';
import type { ClientRateLimitInfo, Options, Store } from 'express-rate-limit';
import type pg from 'pg';

/** The stored key: short keys as they are, long ones (an e-mail in them) shortened to a hash, so two never share a row. */
function storedKey(prefix: string, key: string): string {
  const full = `${prefix}${key}`;
  return full.length <= 120 ? full : `${prefix}#${createHash('sha256').update(key).digest('base64url')}`;
}

/** Windows long over are deleted now and then (at most every PRUNE_EVERY_MS per pool), so the table holds live counters only. */
const PRUNE_EVERY_MS = 10 * 60 * 1000;
const prunedAt = new WeakMap<pg.Pool, number>();
function pruneNowAndThen(pool: pg.Pool): void {
  const last = prunedAt.get(pool) ?? 0;
  if (Date.now() - last < PRUNE_EVERY_MS) return;
  prunedAt.set(pool, Date.now());
  pool.query("delete from rate_limits where reset_at < now() - interval '1 hour'").catch(() => undefined);
}

interface Count {
  hits: number;
  resetAt: Date;
}

async function read(pool: pg.Pool, key: string): Promise<Count | null> {
  const r = await pool.query<{ hits: number; reset_at: Date }>('select hits, reset_at from rate_limits where key = $1 and reset_at > now()', [key]);
  const row = r.rows[0];
  return row ? { hits: row.hits, resetAt: row.reset_at } : null;
}

async function add(pool: pg.Pool, key: string, windowMs: number): Promise<Count> {
  pruneNowAndThen(pool);
  const r = await pool.query<{ hits: number; reset_at: Date }>(
    `insert into rate_limits (key, hits, reset_at) values ($1, 1, now() + $2 * interval '1 millisecond')
     on conflict (key) do update set
       hits = case when rate_limits.reset_at <= now() then 1 else rate_limits.hits + 1 end,
       reset_at = case when rate_limits.reset_at <= now() then excluded.reset_at else rate_limits.reset_at end
     returning hits, reset_at`,
    [key, windowMs],
  );
  const row = r.rows[0]!;
  return { hits: row.hits, resetAt: row.reset_at };
}

export class PgRateLimitStore implements Store {
  localKeys = false;
  private windowMs = 60_000;

  constructor(
    private readonly pool: pg.Pool,
    readonly prefix: string,
  ) {}

  init(options: Options): void {
    this.windowMs = options.windowMs;
  }

  private key(k: string): string {
    return storedKey(this.prefix, k);
  }

  async get(key: string): Promise<ClientRateLimitInfo | undefined> {
    const row = await read(this.pool, this.key(key));
    return row ? { totalHits: row.hits, resetTime: row.resetAt } : undefined;
  }

  async increment(key: string): Promise<ClientRateLimitInfo> {
    const row = await add(this.pool, this.key(key), this.windowMs);
    return { totalHits: row.hits, resetTime: row.resetAt };
  }

  async decrement(key: string): Promise<void> {
    await this.pool.query('update rate_limits set hits = greatest(hits - 1, 0) where key = $1', [this.key(key)]);
  }

  async resetKey(key: string): Promise<void> {
    await this.pool.query('delete from rate_limits where key = $1', [this.key(key)]);
  }
}

/** Whole minutes until a window ends, at least 1 (for messages and Retry-After). */
export const minutesUntil = (resetAt: Date): number => Math.max(1, Math.ceil((resetAt.getTime() - Date.now()) / 60_000));

/**
 * A counter the route hits itself (for example only when an attempt fails):
 * `limit` hits per key in a window of `windowMs` from the first.
 */
export class PgCounter {
  constructor(
    private readonly pool: pg.Pool,
    private readonly prefix: string,
    readonly limit: number,
    readonly windowMs: number,
  ) {}

  /** The window's end when the key has used up its hits, else null. */
  async blocked(key: string): Promise<Date | null> {
    const row = await read(this.pool, storedKey(this.prefix, key));
    return row && row.hits >= this.limit ? row.resetAt : null;
  }

  /** Counts one hit; the window's end when this hit went past the limit, else null. */
  async hit(key: string): Promise<Date | null> {
    const row = await add(this.pool, storedKey(this.prefix, key), this.windowMs);
    return row.hits > this.limit ? row.resetAt : null;
  }

  async clear(key: string): Promise<void> {
    await this.pool.query('delete from rate_limits where key = $1', [storedKey(this.prefix, key)]);
  }

  /** Clears every key that starts with `start` (keys short enough to be stored as they are). */
  async clearStartingWith(start: string): Promise<void> {
    const full = `${this.prefix}${start}`;
    await this.pool.query('delete from rate_limits where left(key, length($1)) = $1', [full]);
  }
}
