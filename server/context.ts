import type pg from 'pg';
import type { Db } from './db/client.ts';
import type { Env } from './env.ts';
import type { Mailer } from './services/mailer.ts';

/** What every route module is built from: no globals, so tests can make several apps. */
export interface AppContext {
  env: Env;
  db: Db;
  pool: pg.Pool;
  mailer: Mailer;
  log: (level: 'info' | 'warn' | 'error', message: string, extra?: unknown) => void;
}
