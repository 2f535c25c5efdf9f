/**
 * The server keeps an idle keep-alive connection open longer than a load
 * balancer's usual 60 s idle timeout (common practice, no source: the server
 * behind a balancer should outlast the balancer, so that the balancer, not
 * the server, closes an idle connection and no request is sent on a socket
 * that is being closed), and tells the client so in its Keep-Alive header.
 */
import http from 'node:http';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { readEnv } from '../../server/env.ts';
import { KEEP_ALIVE_MS, startServer, type RunningServer } from '../../server/main.ts';
import { createTestDatabase } from './support.ts';

let server: RunningServer;
beforeAll(async () => {
  const url = await createTestDatabase();
  server = await startServer({ env: readEnv({ NODE_ENV: 'test', DATABASE_URL: url, PORT: '0', HOST: '127.0.0.1', GRADING_WORKERS: '0' }), logLevel: 'silent' });
});
afterAll(async () => {
  await server.close();
});

describe('idle connections', () => {
  it('stay open past 60 s of idling, and the server says how long', async () => {
    expect(KEEP_ALIVE_MS).toBeGreaterThan(60_000);
    expect(server.server.keepAliveTimeout).toBe(KEEP_ALIVE_MS);
    expect(server.server.headersTimeout).toBeGreaterThan(KEEP_ALIVE_MS);
    const agent = new http.Agent({ keepAlive: true });
    const headers = await new Promise<http.IncomingHttpHeaders>((resolve, reject) => {
      http
        .get(`${server.url}/api/auth/me`, { agent }, (res) => {
          res.resume();
          res.on('end', () => resolve(res.headers));
        })
        .on('error', reject);
    });
    agent.destroy();
    expect(headers.connection).toBe('keep-alive');
    expect(headers['keep-alive']).toBe(`timeout=${KEEP_ALIVE_MS / 1000}`);
  });
});
