import { drizzle, type NodePgDatabase } from 'drizzle-orm/node-postgres';
import pg from 'pg';
import { tagScope } from './scoped-cache.ts';
import * as schema from './schema.ts';

export type Db = NodePgDatabase<typeof schema>;

export interface Database {
  pool: pg.Pool;
  db: Db;
  /** Opens every connection of the pool now (a server does before it listens); false when the database could not be reached. */
  openAll(): Promise<boolean>;
  close(): Promise<void>;
}

/**
 * A pool of `max` connections that stay open once made: a new connection
 * costs PostgreSQL a process and cold caches, and opening many at the moment
 * load rises (when they are wanted) takes the CPU the queries need. With
 * its minimum at its size, the pool never closes a connection for idling,
 * so it needs no idle timeout.
 */
export function connect(url: string, max = 20): Database {
  // Fail fast when PostgreSQL is away, so requests answer 503 instead of hanging.
  const pool = new pg.Pool({ connectionString: url, max, min: max, connectionTimeoutMillis: 2_000 });
  pool.on('error', () => {
    // An idle client lost its server (restart); the pool replaces it on next use.
  });
  const db = drizzle(pool, { schema });
  // The database's cache scope, carried by its transactions too (scoped-cache.ts).
  const scope = {};
  tagScope(db, scope);
  const transaction = db.transaction.bind(db);
  db.transaction = ((run, config) => transaction((tx) => (tagScope(tx, scope), run(tx)), config)) as Db['transaction'];
  const openAll = async () => {
    const clients = await Promise.allSettled(Array.from({ length: max }, () => pool.connect()));
    for (const c of clients) if (c.status === 'fulfilled') c.value.release();
    return clients.every((c) => c.status === 'fulfilled');
  };
  return { pool, db, openAll, close: () => pool.end() };
}

/** A transaction handle; queries that may run inside one take `DbOrTx`. */
export type Tx = Parameters<Parameters<Db['transaction']>[0]>[0];
export type DbOrTx = Db | Tx;
