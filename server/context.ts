import type pg from 'pg';
import type { Db } from './db/client.ts';
import type { Env } from './env.ts';
import type { Background } from './services/background.ts';
import type { Mailer } from './services/mailer.ts';

/** What every route module is built from: no globals, so tests can make several apps. */
export interface AppContext {
  env: Env;
  db: Db;
  pool: pg.Pool;
  mailer: Mailer;
  /** Work started by a request that its answer does not wait for (mail). */
  background: Background;
  log: (level: 'info' | 'warn' | 'error', message: string, extra?: unknown) => void;
}
