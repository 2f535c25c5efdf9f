/**
 * A database that is away answers 503 with Retry-After, however the connection
 * failed: refused on TCP, or through a Unix socket whose file a stopped
 * PostgreSQL has removed (ENOENT). Any other missing file is not the database.
 */
import express from 'express';
import supertest from 'supertest';
import { describe, expect, it } from 'vitest';
import { errorHandler } from '../../server/http/errors.ts';

function appThrowing(err: Error) {
  const app = express();
  app.get('/x', () => {
    throw err;
  });
  app.use(errorHandler({ production: true, log: () => undefined }));
  return app;
}

const withCode = (message: string, code: string) => Object.assign(new Error(message), { code });

describe('a database that is away', () => {
  it('answers 503 with Retry-After for a refused TCP connection and for a missing PostgreSQL socket', async () => {
    for (const err of [
      withCode('connect ECONNREFUSED 127.0.0.1:54329', 'ECONNREFUSED'),
      withCode('connect ENOENT /tmp/loadline-54329/.s.PGSQL.54329', 'ENOENT'),
    ]) {
      const res = await supertest(appThrowing(err)).get('/x');
      expect(res.status).toBe(503);
      expect(res.headers['retry-after']).toBe('1');
      expect(res.body.error.message).toMatch(/database is unavailable/);
    }
  });

  it('answers 500 for any other missing file, with no detail in production', async () => {
    const res = await supertest(appThrowing(withCode("ENOENT: no such file or directory, open '/srv/report.csv'", 'ENOENT'))).get('/x');
    expect(res.status).toBe(500);
    expect(res.headers['retry-after']).toBeUndefined();
    expect(res.body.error.message).toBe('Something went wrong on our side');
  });
});
