/**
 * A bare server process: the environment names the database (already migrated)
 * and the port. Used to run several processes behind one address, and by tests
 * and benchmarks that need a real process to kill or load. Prints one JSON line
 * `{"listening": url}` when ready.
 */
import { fileURLToPath } from 'node:url';
import { readEnv } from './env.ts';
import { startServer } from './main.ts';

const staticDir = process.env.LOADLINE_STATIC_DIR ?? fileURLToPath(new URL('../dist', import.meta.url));
const server = await startServer({ env: readEnv(), staticDir, logLevel: 'warn' });
process.stdout.write(`${JSON.stringify({ listening: server.url, pid: process.pid })}\n`);

const stop = () => {
  void server.close().finally(() => process.exit(0));
};
process.on('SIGTERM', stop);
process.on('SIGINT', stop);
