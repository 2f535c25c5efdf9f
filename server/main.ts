/**
 * Builds the context and listens. `scripts/start.ts` and the tests call
 * `startServer`; nothing here starts a database.
 */
import type { AddressInfo } from 'node:net';
import type { Server } from 'node:http';
import { prepareBridgeTables } from '../sim/bridge.ts';
import { createApp } from './app.ts';
import { createAppServer, listen } from './http/app-server.ts';
import type { AppContext } from './context.ts';
import { connect } from './db/client.ts';
import { readEnv, type Env } from './env.ts';
import { makeLogger } from './logger.ts';
import { backgroundTasks } from './background.ts';
import { openSharedGradingPool } from './grading/pool.ts';
import { closeLiveBus } from './db/live-bus.ts';
import { smtpMailer } from './mail/mailer.ts';
import { startScoreWorker } from './lti/scores.ts';

export interface RunningServer {
  url: string;
  port: number;
  ctx: AppContext;
  server: Server;
  close(): Promise<void>;
}

export function buildContext(env: Env, logLevel: 'info' | 'warn' | 'error' | 'silent' = 'info'): AppContext & { openDb(): Promise<boolean>; closeDb(): Promise<void> } {
  const database = connect(env.DATABASE_URL, env.DATABASE_POOL_SIZE);
  const log = makeLogger(logLevel);
  const background = backgroundTasks(log);
  return {
    env,
    db: database.db,
    pool: database.pool,
    mailer: smtpMailer({ host: env.SMTP_HOST, port: env.SMTP_PORT, from: env.MAIL_FROM }),
    log,
    background,
    openDb: () => database.openAll(),
    // Mail still being sent needs the database; the live bus (made on first use) listens on a connection of its own: it goes with the pool.
    closeDb: async () => {
      await background.settled();
      await closeLiveBus(database.pool);
      await database.close();
    },
  };
}

/** How long an idle keep-alive connection stays open. */
export const KEEP_ALIVE_MS = 65_000;

export async function startServer(opts: { env?: Env; staticDir?: string; logLevel?: 'info' | 'warn' | 'error' | 'silent' } = {}): Promise<RunningServer> {
  const env = opts.env ?? readEnv();
  const ctx = buildContext(env, opts.logLevel);
  // Submissions are graded on worker threads; they load before the server listens and warm up meanwhile.
  const gradingReady = openSharedGradingPool({ workers: env.GRADING_WORKERS, log: ctx.log, aheadBudgetBytes: env.GRADING_AHEAD_MB * 1024 * 1024 });
  // Build the rectifier characteristics of every fault topology now, so the first
  // grading or live injection of a diode or phase fault does not stall a request.
  prepareBridgeTables();
  // The pool's connections are opened now, not when the first burst of requests wants them.
  // A database that cannot be reached yet is no reason not to start: requests answer 503 until it is.
  const dbReady = ctx.openDb().then((all) => {
    if (!all) ctx.log('warn', 'could not open every database connection at start; they open as requests need them');
  });
  const grading = await gradingReady;
  await dbReady;
  const { app } = createApp(ctx, { staticDir: opts.staticDir });
  let server: Server;
  try {
    server = await listen(createAppServer(app), env.PORT, env.HOST);
  } catch (err) {
    await grading.release();
    throw err;
  }
  // An idle keep-alive connection is kept longer than the usual 60 s of a load balancer or a browser, so
  // that it is the client that closes it, not this server just as the client sends on it (the client then
  // sees a reset). Headers must be allowed a little longer still.
  server.keepAliveTimeout = KEEP_ALIVE_MS;
  server.headersTimeout = KEEP_ALIVE_MS + 1000;
  // Grades waiting for learning platforms go out from every process (server/lti/scores.ts).
  const scores = startScoreWorker(ctx, { pollMs: env.LTI_OUTBOX_POLL_MS, baseMs: env.LTI_RETRY_BASE_MS });
  const port = (server.address() as AddressInfo).port;
  return {
    url: `http://${env.HOST}:${port}`,
    port,
    ctx,
    server,
    async close() {
      await new Promise<void>((resolve) => {
        server.close(() => resolve());
        server.closeAllConnections();
      });
      await scores.stop();
      await grading.release();
      await ctx.closeDb();
    },
  };
}
