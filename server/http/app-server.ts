/**
 * The HTTP server of an Express app, with each request and response made
 * with the app's own prototypes from the start.
 *
 * Express gives every request and response its prototypes as it takes them
 * (`Object.setPrototypeOf(req, app.request)`). Done to an object made with
 * another prototype, that keeps the whole request alive through V8's
 * young-generation collections: under load about a quarter of everything the
 * server allocated was moved to the old generation, which only a full
 * collection frees, so one ran every few seconds with pauses of 5-25 ms on the
 * thread that serves every request. When the request already has the app's
 * prototype, Express's call changes nothing and a finished request's objects
 * die young (the test beside this file checks the prototypes; `npm run
 * bench:api` shows the effect on latency).
 */
import http from 'node:http';
import type { Socket } from 'node:net';
import type { Express } from 'express';

interface AppPrototypes {
  request: object;
  response: object;
}

export function createAppServer(app: Express): http.Server {
  const { request, response } = app as unknown as AppPrototypes;
  // Node's own constructors, called on objects that already carry the app's prototypes (whose chains lead back to Node's).
  function AppRequest(this: http.IncomingMessage, socket: Socket) {
    Reflect.apply(http.IncomingMessage, this, [socket]);
  }
  AppRequest.prototype = request;
  function AppResponse(this: http.ServerResponse, req: http.IncomingMessage, options?: unknown) {
    Reflect.apply(http.ServerResponse, this, [req, options]);
  }
  AppResponse.prototype = response;
  return http.createServer(
    {
      IncomingMessage: AppRequest as unknown as typeof http.IncomingMessage,
      ServerResponse: AppResponse as unknown as typeof http.ServerResponse,
    },
    app,
  );
}

/** Listens on `port` and `host`; rejects when the port cannot be had. */
export function listen(server: http.Server, port: number, host: string): Promise<http.Server> {
  return new Promise((resolve, reject) => {
    server.once('error', reject);
    server.listen(port, host, () => {
      server.off('error', reject);
      resolve(server);
    });
  });
}
