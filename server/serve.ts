/**
 * A bare server process: the environment names the database (already migrated)
 * and the port. Used to run several processes behind one address, and by tests
 * and benchmarks that need a real process to kill or load. Prints one JSON line
 * `{"listening": url}` when ready.
 *
 * WEB_PROCESSES=n (default 1) starts n processes sharing the one port (Node's
 * cluster: the first process hands each new connection to the next of them).
 * They share nothing but PostgreSQL, as processes on several machines would.
 * A process that dies is replaced; SIGTERM or SIGINT stops them all.
 */
import cluster from 'node:cluster';
import { fileURLToPath } from 'node:url';
import { readEnv } from './env.ts';
import { startServer } from './main.ts';

const processes = Math.max(1, Math.min(16, Number(process.env.WEB_PROCESSES ?? 1) || 1));

async function serveOne() {
  const staticDir = process.env.LOADLINE_STATIC_DIR ?? fileURLToPath(new URL('../dist', import.meta.url));
  const server = await startServer({ env: readEnv(), staticDir, logLevel: 'warn' });
  if (cluster.isWorker) process.send?.({ listening: server.url });
  else process.stdout.write(`${JSON.stringify({ listening: server.url, pid: process.pid })}\n`);

  const stop = () => {
    void server.close().finally(() => process.exit(0));
  };
  process.on('SIGTERM', stop);
  process.on('SIGINT', stop);
}

function superviseMany() {
  let stopping = false;
  let announced = false;
  const ready = new Set<number>();
  const fork = () => {
    const worker = cluster.fork();
    worker.on('message', (msg: { listening?: string }) => {
      if (typeof msg?.listening !== 'string') return;
      ready.add(worker.id);
      if (!announced && ready.size >= processes) {
        announced = true;
        const pids = Object.values(cluster.workers ?? {}).map((w) => w?.process.pid);
        process.stdout.write(`${JSON.stringify({ listening: msg.listening, pid: process.pid, processes: pids })}\n`);
      }
    });
  };
  cluster.on('exit', (worker, code, signal) => {
    ready.delete(worker.id);
    if (stopping) {
      if (Object.keys(cluster.workers ?? {}).length === 0) process.exit(0);
      return;
    }
    process.stderr.write(`${JSON.stringify({ level: 'warn', message: 'server process ended; starting another', code, signal })}\n`);
    fork();
  });
  const stopAll = () => {
    if (stopping) return;
    stopping = true;
    const workers = Object.values(cluster.workers ?? {});
    if (workers.length === 0) process.exit(0);
    for (const w of workers) w?.process.kill('SIGTERM');
  };
  process.on('SIGTERM', stopAll);
  process.on('SIGINT', stopAll);
  for (let i = 0; i < processes; i++) fork();
}

if (cluster.isPrimary && processes > 1) superviseMany();
else await serveOne();
