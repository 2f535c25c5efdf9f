/**
 * The throwaway database of the test command: its own port and folder,
 * migrated and seeded once into a template that each test file copies.
 */
import { chmodSync, mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { connect } from '../server/db/client.ts';
import { applyMigrations } from '../server/db/migrate.ts';
import { seedDemo } from '../server/demo/seed.ts';
import { ensureDatabase, startCluster } from './pg-cluster.ts';

export const TEMPLATE_DB = 'loadline_template';

/** A free loopback port, so several test runs on one machine never share a cluster. */
async function freePort(): Promise<number> {
  const { createServer } = await import('node:net');
  return new Promise((resolve, reject) => {
    const srv = createServer();
    srv.once('error', reject);
    srv.listen(0, '127.0.0.1', () => {
      const address = srv.address();
      const port = typeof address === 'object' && address ? address.port : 0;
      srv.close(() => resolve(port));
    });
  });
}

export async function withTestCluster<T>(fn: (env: NodeJS.ProcessEnv) => T | Promise<T>): Promise<T> {
  const port = process.env.LOADLINE_TEST_PG_PORT ? Number(process.env.LOADLINE_TEST_PG_PORT) : await freePort();
  const holder = mkdtempSync(join(tmpdir(), 'loadline-test-'));
  chmodSync(holder, 0o755); // the database user must reach the data folder inside
  const dataDir = join(holder, 'pg');
  const cluster = startCluster({ dataDir, port, socketDir: `/tmp/loadline-t${port}`, throwaway: true, log: (l) => console.log(l) });
  const stop = () => {
    cluster.stop();
    rmSync(holder, { recursive: true, force: true });
  };
  process.on('exit', stop);
  process.on('SIGINT', () => {
    stop();
    process.exit(130);
  });
  try {
    await ensureDatabase(cluster, TEMPLATE_DB);
    const database = connect(cluster.url(TEMPLATE_DB), 2);
    await applyMigrations(database.db);
    await seedDemo(database.db);
    await database.close();
    return await fn({
      ...process.env,
      NODE_ENV: 'test',
      LOADLINE_TEST_PG: cluster.url(''),
      LOADLINE_TEST_TEMPLATE: TEMPLATE_DB,
      LOADLINE_TEST_PG_BIN_PORT: String(port),
      LOADLINE_TEST_PG_DATA: cluster.dataDir,
    });
  } finally {
    stop();
  }
}
