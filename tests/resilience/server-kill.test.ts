/**
 * The server killed mid-attempt: a student's bench posts numbered event
 * batches with retry; the server process is SIGKILLed while it does and
 * started again on the same address; the bench resends, and the stored log is
 * exactly the sent events, none lost and none twice. (Common practice, no
 * source: at-least-once delivery made exactly-once by idempotent sequence numbers.)
 */
import { spawn, type ChildProcess } from 'node:child_process';
import { createServer } from 'node:net';
import { once } from 'node:events';
import { fileURLToPath } from 'node:url';
import { asc, eq } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { attemptEvents, attempts } from '../../server/db/schema.ts';
import { httpSignIn, makeAttempt, makeClass, students } from '../server/live-fixtures.ts';
import { startTestApp, type TestApp } from '../server/support.ts';
import { plannedEvents, postAll } from './bench-client.ts';

async function freePort(): Promise<number> {
  const srv = createServer();
  srv.listen(0, '127.0.0.1');
  await once(srv, 'listening');
  const address = srv.address();
  const port = typeof address === 'object' && address ? address.port : 0;
  await new Promise((r) => srv.close(r));
  return port;
}

const root = fileURLToPath(new URL('../..', import.meta.url));

interface Server {
  url: string;
  child: ChildProcess;
}

/**
 * The bare server entry in one process (node with the TypeScript loader, no
 * wrapper process), so that SIGKILL reaches the server itself.
 */
async function startServer(databaseUrl: string, port: number): Promise<Server> {
  const child = spawn(process.execPath, ['--import', 'tsx', 'server/serve.ts'], {
    cwd: root,
    env: { ...process.env, NODE_ENV: 'test', DATABASE_URL: databaseUrl, PORT: String(port), HOST: '127.0.0.1' },
    stdio: ['ignore', 'pipe', 'pipe'],
  });
  let err = '';
  child.stderr!.on('data', (d: Buffer) => (err += d.toString()));
  const url = await new Promise<string>((resolve, reject) => {
    let out = '';
    const timer = setTimeout(() => reject(new Error(`server process did not start: ${err}`)), 90_000);
    child.stdout!.on('data', (d: Buffer) => {
      out += d.toString();
      const line = out.split('\n').find((l) => l.includes('"listening"'));
      if (line) {
        clearTimeout(timer);
        resolve((JSON.parse(line) as { listening: string }).listening);
      }
    });
    child.once('exit', (code) => {
      clearTimeout(timer);
      reject(new Error(`server process exited (${code}): ${err}`));
    });
  });
  return { url, child };
}

let t: TestApp;
let server: Server | null = null;

beforeAll(async () => {
  t = await startTestApp();
});
afterAll(async () => {
  if (server && server.child.exitCode === null && server.child.signalCode === null) {
    const exited = once(server.child, 'exit');
    server.child.kill('SIGTERM');
    await exited;
  }
  await t?.close();
});

describe('a server process killed mid-attempt', () => {
  it('loses no event and stores none twice once the bench has resent', async () => {
    const fx = await makeClass(t.ctx.db, { students: 1, name: 'Resilience section' });
    const attemptId = await makeAttempt(t.ctx.db, fx, fx.studentIds[0]!);
    const port = await freePort();
    server = await startServer(t.databaseUrl, port);
    const client = await httpSignIn(server.url, students[0]!.email);
    const sent = plannedEvents(400);
    const poster = postAll(client, attemptId, sent, { batchSize: 5, deadlineMs: 150_000 });

    // Kill it once a fifth of the batches are in, with requests in flight.
    const until = Date.now() + 60_000;
    while (poster.acknowledged() < 16 && Date.now() < until) await new Promise((r) => setTimeout(r, 20));
    expect(poster.acknowledged()).toBeGreaterThanOrEqual(16);
    const killed = once(server.child, 'exit');
    server.child.kill('SIGKILL');
    const [, signal] = (await killed) as [number | null, string | null];
    expect(signal).toBe('SIGKILL');
    const ackedAtKill = poster.acknowledged();
    // The bench keeps trying while the process is gone; then the server comes back on the same address.
    const downUntil = Date.now() + 30_000;
    while (poster.failures.length < 3 && Date.now() < downUntil) await new Promise((r) => setTimeout(r, 20));
    server = await startServer(t.databaseUrl, port);
    await poster.done;

    expect(ackedAtKill).toBeLessThan(sent.length / 5);
    expect(poster.failures.some((f) => f.status === 'network')).toBe(true);
    const stored = await t.ctx.db
      .select({ seq: attemptEvents.seq, payload: attemptEvents.payload })
      .from(attemptEvents)
      .where(eq(attemptEvents.attemptId, attemptId))
      .orderBy(asc(attemptEvents.seq));
    expect(stored.map((s) => s.seq)).toEqual(sent.map((s) => s.seq));
    expect(stored.map((s) => s.payload)).toEqual(sent.map((s) => s.event));
    const [row] = await t.ctx.db.select({ lastSeq: attempts.lastSeq }).from(attempts).where(eq(attempts.id, attemptId));
    expect(row?.lastSeq).toBe(sent.length);
    console.log(`server kill: ${sent.length} events in ${sent.length / 5} batches, killed after ${ackedAtKill}; ${poster.failures.length} failed tries resent; stored ${stored.length}, none twice`);
  });
});
