/**
 * The database pool opens all its connections before the server listens and
 * keeps them: a connection made when a burst of requests wants it costs
 * PostgreSQL a new process and cold caches just when the CPU is short.
 */
import { createServer } from 'node:net';
import pg from 'pg';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { connect } from '../../server/db/client.ts';
import { readEnv } from '../../server/env.ts';
import { startServer, type RunningServer } from '../../server/main.ts';
import { createTestDatabase } from './support.ts';

let url: string;
let watcher: pg.Client;
beforeAll(async () => {
  url = await createTestDatabase();
  watcher = new pg.Client({ connectionString: url });
  await watcher.connect();
});
afterAll(async () => {
  await watcher.end();
});

/** Backends connected to this test's database, other than the watcher's own. */
async function backends(): Promise<number> {
  const { rows } = await watcher.query<{ n: number }>(
    "select count(*)::int as n from pg_stat_activity where datname = current_database() and pid <> pg_backend_pid() and backend_type = 'client backend'",
  );
  return rows[0]!.n;
}

/** The backend count once it reaches `expected`, or after 5 s, whichever comes first. */
async function backendsOnceSettled(expected: number): Promise<number> {
  const deadline = Date.now() + 5_000;
  let n = await backends();
  while (n !== expected && Date.now() < deadline) {
    await new Promise((r) => setTimeout(r, 50));
    n = await backends();
  }
  return n;
}

describe('the database pool', () => {
  it('opens every connection at once, and a burst of queries reuses them', async () => {
    const database = connect(url, 6);
    try {
      expect(await database.openAll()).toBe(true);
      expect(database.pool.totalCount).toBe(6);
      expect(database.pool.idleCount).toBe(6);
      expect(await backends()).toBe(6);
      // Twenty queries at once queue for the six connections; none is added or closed.
      await Promise.all(Array.from({ length: 20 }, () => database.pool.query('select pg_sleep(0.01)')));
      expect(database.pool.totalCount).toBe(6);
      expect(await backends()).toBe(6);
      // And an idle connection is never closed for idling: the pool keeps its minimum at its size.
      expect((database.pool as unknown as { options: { min: number; max: number } }).options).toMatchObject({ min: 6, max: 6 });
    } finally {
      await database.close();
    }
    // Closing ends them all; a backend leaves pg_stat_activity a moment after its client has gone.
    expect(await backendsOnceSettled(0)).toBe(0);
  });

  it('says so, without throwing, when the database cannot be reached', async () => {
    // A loopback port with nothing listening on it.
    const port = await new Promise<number>((resolve) => {
      const srv = createServer().listen(0, '127.0.0.1', () => {
        const address = srv.address();
        srv.close(() => resolve(typeof address === 'object' && address ? address.port : 0));
      });
    });
    const database = connect(`postgres://loadline@127.0.0.1:${port}/nowhere`, 3);
    try {
      expect(await database.openAll()).toBe(false);
    } finally {
      await database.close();
    }
  });

  it('is open in full before the server listens', async () => {
    let server: RunningServer | undefined;
    try {
      server = await startServer({ env: readEnv({ NODE_ENV: 'test', DATABASE_URL: url, PORT: '0', HOST: '127.0.0.1', GRADING_WORKERS: '0', DATABASE_POOL_SIZE: '5' }), logLevel: 'silent' });
      expect(server.ctx.pool.totalCount).toBe(5);
      expect(await backends()).toBeGreaterThanOrEqual(5);
    } finally {
      await server?.close();
    }
  });
});
