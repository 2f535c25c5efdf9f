/**
 * `npm start`: PostgreSQL on loopback (kept in .data/), migrations, the demo
 * seed when the database is empty, the client build, the local mail fake,
 * and one Express process serving app and API. Ctrl-C stops it all.
 *
 * It runs in production mode, so it gives the server what production needs:
 * the public address it prints (PUBLIC_URL, which e-mailed links are built
 * from; `npm run dev` prints and uses Vite's) and a session secret of this
 * installation's own (scripts/server-secret.ts). Either may be set in the
 * environment instead.
 */
import { fileURLToPath } from 'node:url';
import { join } from 'node:path';
import { build } from 'vite';
import { connect } from '../server/db/client.ts';
import { applyMigrations } from '../server/db/migrate.ts';
import { isEmpty, seedDemo } from '../server/demo/seed.ts';
import { DEMO_PASSWORD, DEMO_PEOPLE, DEMO_SCHOOL } from '../server/db/demo-people.ts';
import { readEnv } from '../server/env.ts';
import { startServer } from '../server/main.ts';
import { startSmtpFake } from '../server/mail/smtp-fake.ts';
import { ensureDatabase, startCluster } from './pg-cluster.ts';
import { serverSecret } from './server-secret.ts';

const root = fileURLToPath(new URL('..', import.meta.url));
const PG_PORT = Number(process.env.LOADLINE_PG_PORT ?? 54329);
const APP_PORT = Number(process.env.PORT ?? 5180);
const skipBuild = process.argv.includes('--no-build');
const devApi = process.argv.includes('--api-only');
/** Where people open the app: this server, or under `npm run dev` the Vite server in front of it (vite.config.ts). */
const publicUrl = (process.env.PUBLIC_URL ?? `http://localhost:${devApi ? 5173 : APP_PORT}`).replace(/\/+$/, '');

async function main() {
  const cluster = startCluster({ dataDir: join(root, '.data', 'pg'), port: PG_PORT, socketDir: `/tmp/loadline-${PG_PORT}` });
  let stopping = false;
  const stopDb = () => cluster.stop();
  process.on('exit', stopDb);

  try {
    if (!process.env.PUBLIC_URL && !devApi && APP_PORT === 0) throw new Error('npm start needs a fixed PORT (or PUBLIC_URL): the address it prints is the one e-mailed links use');
    const sessionSecret = process.env.SESSION_SECRET ?? serverSecret(cluster.dataDir);
    await ensureDatabase(cluster, 'loadline');
    const databaseUrl = cluster.url('loadline');

    if (!skipBuild && !devApi) {
      console.log('Building the client…');
      await build({ root, logLevel: 'warn' });
    }

    const database = connect(databaseUrl, 4);
    await applyMigrations(database.db);
    if (await isEmpty(database.db)) {
      console.log('Seeding the demo school…');
      await seedDemo(database.db);
    }
    // The mail fake files what it receives through its own small pool.
    const smtpFake = await startSmtpFake(database.db, 0);

    const server = await startServer({
      env: readEnv({
        ...process.env,
        DATABASE_URL: databaseUrl,
        PORT: String(APP_PORT),
        NODE_ENV: process.env.NODE_ENV ?? (devApi ? 'development' : 'production'),
        SMTP_PORT: String(smtpFake.port),
        PUBLIC_URL: publicUrl,
        SESSION_SECRET: sessionSecret,
      }),
      staticDir: devApi ? undefined : join(root, 'dist'),
      logLevel: 'warn',
    });

    console.log(
      devApi
        ? `\nLoadline's API is running at ${server.url.replace('127.0.0.1', 'localhost')}; open the app at ${publicUrl} (the Vite dev server proxies to it)`
        : `\nLoadline is running at ${publicUrl}`,
    );
    console.log(`Demo school: ${DEMO_SCHOOL}. Every demo account's password is "${DEMO_PASSWORD}".`);
    for (const role of ['admin', 'instructor', 'student'] as const) {
      const people = DEMO_PEOPLE.filter((p) => p.role === role);
      console.log(`  ${role.padEnd(10)} ${people.map((p) => p.email).slice(0, 3).join(', ')}${people.length > 3 ? ` (+${people.length - 3} more)` : ''}`);
    }
    console.log('Press Ctrl-C to stop the server and the database.\n');

    const shutdown = async () => {
      if (stopping) return;
      stopping = true;
      console.log('\nStopping…');
      await server.close().catch(() => undefined);
      await smtpFake.close().catch(() => undefined);
      await database.close().catch(() => undefined);
      stopDb();
      process.exit(0);
    };
    process.on('SIGINT', () => void shutdown());
    process.on('SIGTERM', () => void shutdown());
  } catch (err) {
    console.error(err instanceof Error ? err.message : err);
    stopDb();
    process.exit(1);
  }
}

void main();
