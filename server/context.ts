import type pg from 'pg';
import type { Db } from './db/client.ts';
import type { Env } from './env.ts';
import type { Background } from './background.ts';

export interface OutgoingMail {
  to: string;
  subject: string;
  text: string;
}

/** How the app sends mail (SMTP in mail/mailer.ts; tests pass their own). */
export interface Mailer {
  send(mail: OutgoingMail): Promise<void>;
}

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
