/**
 * express-rate-limit counters in PostgreSQL, so every server process behind
 * one address counts the same client together.
 */
import type { ClientRateLimitInfo, Options, Store } from 'express-rate-limit';
import type pg from 'pg';

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
    return `${this.prefix}${k}`.slice(0, 200);
  }

  async get(key: string): Promise<ClientRateLimitInfo | undefined> {
    const r = await this.pool.query<{ hits: number; reset_at: Date }>(
      'select hits, reset_at from rate_limits where key = $1 and reset_at > now()',
      [this.key(key)],
    );
    const row = r.rows[0];
    return row ? { totalHits: row.hits, resetTime: row.reset_at } : undefined;
  }

  async increment(key: string): Promise<ClientRateLimitInfo> {
    const r = await this.pool.query<{ hits: number; reset_at: Date }>(
      `insert into rate_limits (key, hits, reset_at) values ($1, 1, now() + $2 * interval '1 millisecond')
       on conflict (key) do update set
         hits = case when rate_limits.reset_at <= now() then 1 else rate_limits.hits + 1 end,
         reset_at = case when rate_limits.reset_at <= now() then excluded.reset_at else rate_limits.reset_at end
       returning hits, reset_at`,
      [this.key(key), this.windowMs],
    );
    const row = r.rows[0]!;
    return { totalHits: row.hits, resetTime: row.reset_at };
  }

  async decrement(key: string): Promise<void> {
    await this.pool.query('update rate_limits set hits = greatest(hits - 1, 0) where key = $1', [this.key(key)]);
  }

  async resetKey(key: string): Promise<void> {
    await this.pool.query('delete from rate_limits where key = $1', [this.key(key)]);
  }
}
