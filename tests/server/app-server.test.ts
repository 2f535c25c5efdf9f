/**
 * The server makes each request and response with the app's own prototypes
 * (server/http/app-server.ts), so Express's per-request Object.setPrototypeOf
 * changes nothing and a finished request's objects can die young.
 */
import { IncomingMessage, ServerResponse } from 'node:http';
import type { AddressInfo } from 'node:net';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createAppServer, listen } from '../../server/http/app-server.ts';
import { startTestApp, type TestApp } from './support.ts';

let t: TestApp;
beforeAll(async () => {
  t = await startTestApp();
});
afterAll(async () => {
  await t.close();
});

describe('the app server', () => {
  it('hands Express requests and responses that already carry the app’s prototypes, and serves them as usual', async () => {
    const server = await listen(createAppServer(t.app), 0, '127.0.0.1');
    const seen: { request: boolean; response: boolean; nodeRequest: boolean; nodeResponse: boolean }[] = [];
    const app = t.app as unknown as { request: object; response: object };
    // Before Express takes the request: the prototypes it would set are already there.
    server.prependListener('request', (req: IncomingMessage, res: ServerResponse) => {
      seen.push({
        request: Object.getPrototypeOf(req) === app.request,
        response: Object.getPrototypeOf(res) === app.response,
        nodeRequest: req instanceof IncomingMessage,
        nodeResponse: res instanceof ServerResponse,
      });
    });
    try {
      const { port } = server.address() as AddressInfo;
      const res = await fetch(`http://127.0.0.1:${port}/api/auth/me`);
      expect(res.status).toBe(200);
      const body = (await res.json()) as { user: unknown; csrfToken: string };
      expect(body.user).toBeNull();
      expect(body.csrfToken).toMatch(/\S{16,}/);
      // Express's own response helpers and headers are all there.
      expect(res.headers.get('content-type')).toMatch(/^application\/json/);
      expect(res.headers.get('x-content-type-options')).toBe('nosniff');
      expect(seen).toEqual([{ request: true, response: true, nodeRequest: true, nodeResponse: true }]);
    } finally {
      await new Promise<void>((resolve) => {
        server.close(() => resolve());
        server.closeAllConnections();
      });
    }
  });

  it('rejects when the port is taken', async () => {
    const first = await listen(createAppServer(t.app), 0, '127.0.0.1');
    try {
      const { port } = first.address() as AddressInfo;
      await expect(listen(createAppServer(t.app), port, '127.0.0.1')).rejects.toMatchObject({ code: 'EADDRINUSE' });
    } finally {
      await new Promise<void>((resolve) => first.close(() => resolve()));
    }
  });
});
