/**
 * WEB_PROCESSES: several server processes on one port, sharing nothing but
 * PostgreSQL. Every request is answered, a process that dies is replaced,
 * and SIGTERM stops them all.
 */
import http from 'node:http';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { spawnServer, type ServerProcess } from './live-fixtures.ts';
import { createTestDatabase } from './support.ts';

const alive = (pid: number) => {
  try {
    process.kill(pid, 0);
    return true;
  } catch {
    return false;
  }
};

/** A fresh connection each time (no agent), so the primary hands requests round the processes. */
function me(url: string): Promise<number> {
  return new Promise((resolve, reject) => {
    const req = http.get(`${url}/api/auth/me`, { agent: false, timeout: 10_000 }, (res) => {
      res.resume();
      res.on('end', () => resolve(res.statusCode ?? 0));
    });
    req.on('timeout', () => req.destroy(new Error('no answer within 10 s')));
    req.on('error', reject);
  });
}

let server: ServerProcess;
beforeAll(async () => {
  server = await spawnServer(await createTestDatabase(), { WEB_PROCESSES: '2', GRADING_WORKERS: '0' });
}, 120_000);
afterAll(async () => {
  await server?.stop();
});

describe('several server processes on one port', () => {
  it('starts them all and answers every request', async () => {
    expect(server.processes).toHaveLength(2);
    expect(new Set(server.processes).size).toBe(2);
    for (const pid of server.processes) expect(alive(pid)).toBe(true);
    const statuses = await Promise.all(Array.from({ length: 20 }, () => me(server.url)));
    expect(statuses.every((s) => s === 200)).toBe(true);
  });

  it('replaces a process that dies and stops them all on SIGTERM', async () => {
    const [victim, survivor] = server.processes as [number, number];
    process.kill(victim, 'SIGKILL');
    // A replacement comes up: the primary has two live children again.
    const { execFileSync } = await import('node:child_process');
    // Live children of the primary (a killed one lingers as a zombie until reaped: state Z).
    const children = () =>
      execFileSync('ps', ['-o', 'pid=,stat=', '--ppid', String(server.child.pid)])
        .toString()
        .split('\n')
        .map((l) => l.trim().split(/\s+/))
        .filter(([pid, stat]) => Number(pid) > 0 && stat !== undefined && !stat.startsWith('Z'))
        .map(([pid]) => Number(pid));
    // Until the killed one is gone (for an instant after SIGKILL it is still listed, not yet a zombie) and two are up.
    const deadline = Date.now() + 60_000;
    let now = children();
    while ((now.length !== 2 || now.includes(victim)) && Date.now() < deadline) {
      await new Promise((r) => setTimeout(r, 200));
      now = children();
    }
    expect(now).toHaveLength(2);
    expect(now).toContain(survivor);
    expect(now).not.toContain(victim);
    // (A connection handed over in the instant the process died is lost, as with any crash; clients retry.)
    const statuses = await Promise.all(Array.from({ length: 10 }, () => me(server.url)));
    expect(statuses.every((st) => st === 200)).toBe(true);

    await server.stop();
    for (const pid of now) {
      const until = Date.now() + 20_000;
      while (alive(pid) && Date.now() < until) await new Promise((r) => setTimeout(r, 100));
      expect(alive(pid)).toBe(false);
    }
  }, 120_000);
});
