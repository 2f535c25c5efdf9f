/**
 * PostgreSQL restarted while students post events: while it is down the
 * server answers 503 with Retry-After (not a 500, not a hang), the benches
 * retry, and once it is back every event is stored exactly once. The test
 * stops and starts the test cluster itself and leaves it running.
 * (Common practice, no source; OWASP ASVS 4.0 V7.4.1 for the generic error.)
 */
import { spawnSync } from 'node:child_process';
import { existsSync, readdirSync } from 'node:fs';
import { join } from 'node:path';
import { userInfo } from 'node:os';
import pg from 'pg';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { httpSignIn, makeAttempt, makeClass, spawnServer, students, type ServerProcess } from '../server/live-fixtures.ts';
import { startTestApp, type TestApp } from '../server/support.ts';
import { plannedEvents, postAll } from './bench-client.ts';

const dataDir = process.env.LOADLINE_TEST_PG_DATA;
const port = process.env.LOADLINE_TEST_PG_BIN_PORT;

function pgCtl(args: string[]): void {
  const base = '/usr/lib/postgresql';
  const version = readdirSync(base).filter((v) => existsSync(join(base, v, 'bin', 'pg_ctl'))).sort((a, b) => Number(b) - Number(a))[0];
  if (!version) throw new Error('pg_ctl not found');
  const bin = join(base, version, 'bin', 'pg_ctl');
  const [cmd, argv] = userInfo().uid === 0 ? ['runuser', ['-u', 'postgres', '--', bin, ...args]] : [bin, args];
  const res = spawnSync(cmd, argv as string[], { cwd: '/', encoding: 'utf8' });
  if (res.status !== 0) throw new Error(`pg_ctl ${args.join(' ')} failed: ${res.stdout}${res.stderr}`);
}

/** The settings the test cluster was started with (scripts/pg-cluster.ts). */
const startOptions = () =>
  [`listen_addresses='127.0.0.1'`, `port=${port}`, `unix_socket_directories='/tmp/loadline-t${port}'`, 'max_connections=200', 'fsync=off', 'synchronous_commit=off', 'full_page_writes=off']
    .map((s) => `-c ${s}`)
    .join(' ');
const startCluster = () => pgCtl(['-D', dataDir!, '-l', join(dataDir!, 'server.log'), '-w', '-t', '60', '-o', startOptions(), 'start']);
const clusterRunning = () => spawnSync('runuser', ['-u', 'postgres', '--', 'test', '-e', join(dataDir!, 'postmaster.pid')]).status === 0 || existsSync(join(dataDir!, 'postmaster.pid'));

let t: TestApp;
let server: ServerProcess | null = null;

beforeAll(async () => {
  if (!dataDir || !port) throw new Error('LOADLINE_TEST_PG_DATA and LOADLINE_TEST_PG_BIN_PORT are not set: run through npm test');
  t = await startTestApp();
});
afterAll(async () => {
  // Whatever happened, the cluster is left running for whatever comes next.
  if (!clusterRunning()) startCluster();
  await server?.stop();
  await t?.close().catch(() => undefined);
});

describe('PostgreSQL restarted while students post events', () => {
  it('answers 503 with Retry-After while it is down, and nothing is lost once the benches retry', async () => {
    const fx = await makeClass(t.ctx.db, { students: 2, name: 'Restart section' });
    const attemptIds = [await makeAttempt(t.ctx.db, fx, fx.studentIds[0]!), await makeAttempt(t.ctx.db, fx, fx.studentIds[1]!)];
    server = await spawnServer(t.databaseUrl);
    const clients = [await httpSignIn(server.url, students[0]!.email), await httpSignIn(server.url, students[1]!.email)];
    const sent = plannedEvents(300);
    const posters = clients.map((c, i) => postAll(c, attemptIds[i]!, sent, { batchSize: 5, deadlineMs: 150_000 }));

    const until = Date.now() + 60_000;
    while (posters.some((p) => p.acknowledged() < 10) && Date.now() < until) await new Promise((r) => setTimeout(r, 20));
    pgCtl(['-D', dataDir!, '-m', 'fast', '-w', '-t', '60', 'stop']);
    try {
      // Down until the benches have been told to come back later a few times.
      const downUntil = Date.now() + 60_000;
      while (posters.reduce((n, p) => n + p.failures.length, 0) < 6 && Date.now() < downUntil) await new Promise((r) => setTimeout(r, 20));
    } finally {
      startCluster();
    }
    await Promise.all(posters.map((p) => p.done));

    const failures = posters.flatMap((p) => p.failures);
    expect(failures.length).toBeGreaterThanOrEqual(6);
    // Every failed try was a 503 that says when to retry: no 500, no dropped connection.
    expect(failures.map((f) => f.status)).toEqual(failures.map(() => 503));
    expect(failures.every((f) => f.retryAfter !== null && Number(f.retryAfter) > 0)).toBe(true);

    const db = new pg.Client({ connectionString: t.databaseUrl });
    await db.connect();
    try {
      for (const attemptId of attemptIds) {
        const { rows } = await db.query<{ seq: number; payload: unknown }>('select seq, payload from attempt_events where attempt_id = $1 order by seq', [attemptId]);
        expect(rows.map((r) => r.seq)).toEqual(sent.map((s) => s.seq));
        expect(rows.map((r) => r.payload)).toEqual(sent.map((s) => s.event));
      }
    } finally {
      await db.end();
    }
    const slowest = Math.max(...failures.map((f) => f.ms));
    console.log(`database restart: ${failures.length} tries answered 503 (slowest ${slowest} ms), all ${sent.length * 2} events stored once`);
  });
});
