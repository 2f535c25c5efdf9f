import type { ErrorRequestHandler, RequestHandler } from 'express';
import { z } from 'zod';
import type { ApiErrorBody } from '../../shared/api/errors.ts';

/** An error with an HTTP status that is safe to show the caller. */
export class HttpError extends Error {
  constructor(
    readonly status: number,
    message: string,
    readonly details: Omit<ApiErrorBody['error'], 'message'> = {},
  ) {
    super(message);
  }
}

export const badRequest = (message: string, details: Omit<ApiErrorBody['error'], 'message'> = {}) =>
  new HttpError(400, message, details);
export const notFound = (what = 'Not found') => new HttpError(404, what);
export const forbidden = (message = 'You do not have access to this') => new HttpError(403, message);
export const conflict = (message: string, field?: string) => new HttpError(409, message, field ? { field } : {});

export function zodToHttp(err: z.ZodError, where: 'body' | 'query' | 'params' | 'file' = 'body'): HttpError {
  const issues = err.issues.map((i) => ({ path: i.path.map(String).join('.') || where, message: i.message }));
  const first = issues[0] ?? { path: where, message: 'Invalid input' };
  return new HttpError(400, `${first.path}: ${first.message}`, { field: first.path, issues });
}

export const apiNotFound: RequestHandler = (req, _res, next) => {
  next(new HttpError(404, `No API route for ${req.method} ${req.path}`));
};

/**
 * A connection to PostgreSQL through its Unix socket while the server is
 * stopped: it removes the socket file, so connecting fails with ENOENT.
 */
export function isMissingDatabaseSocket(err: unknown): boolean {
  return (err as { code?: unknown } | null)?.code === 'ENOENT' && /\.s\.PGSQL\./.test((err as Error).message);
}

function isDatabaseDown(err: unknown): boolean {
  if (!(err instanceof Error)) return false;
  const code = (err as { code?: string }).code;
  return (
    code === 'ECONNREFUSED' ||
    code === 'ECONNRESET' ||
    isMissingDatabaseSocket(err) ||
    code === '57P01' || // admin_shutdown
    code === '57P03' || // cannot_connect_now
    /timeout exceeded when trying to connect|Connection terminated|the database system is (starting up|shutting down)/i.test(err.message)
  );
}

/**
 * PostgreSQL's data exceptions (class 22: a NUL character in text, a number
 * out of a column's range, text too long for its column): input the
 * validation let through that the database cannot store. The transaction is
 * rolled back, so nothing was written; the caller gets a 400, not a 500.
 */
function isUnstorableInput(err: unknown): boolean {
  const codeOf = (e: unknown) => (e as { code?: unknown } | null)?.code;
  const code = codeOf(err) ?? codeOf((err as { cause?: unknown } | null)?.cause);
  return typeof code === 'string' && code.startsWith('22');
}

export function errorHandler(opts: { production: boolean; log: (err: unknown) => void }): ErrorRequestHandler {
  return (err, _req, res, _next) => {
    let status = 500;
    let body: ApiErrorBody;
    if (err instanceof HttpError) {
      status = err.status;
      body = { error: { message: err.message, ...err.details } };
    } else if (err instanceof z.ZodError) {
      const http = zodToHttp(err);
      status = http.status;
      body = { error: { message: http.message, ...http.details } };
    } else if ((err as { type?: string }).type === 'entity.too.large') {
      status = 413;
      body = { error: { message: 'Request body is too large', field: 'body' } };
    } else if ((err as { type?: string }).type === 'entity.parse.failed') {
      status = 400;
      body = { error: { message: 'Request body is not valid JSON', field: 'body' } };
    } else if (typeof (err as { status?: unknown }).status === 'number' && (err as { status: number }).status < 500) {
      status = (err as { status: number }).status;
      body = { error: { message: (err as Error).message || 'Bad request' } };
    } else if (isUnstorableInput(err)) {
      status = 400;
      body = { error: { message: 'The request holds a value that cannot be stored (a NUL character, or a number or text out of range)', field: 'body' } };
    } else if (isDatabaseDown(err)) {
      status = 503;
      res.setHeader('Retry-After', '1');
      body = { error: { message: 'The database is unavailable; try again shortly' } };
    } else {
      opts.log(err);
      body = {
        error: {
          message: opts.production ? 'Something went wrong on our side' : String((err as Error)?.message ?? err),
        },
      };
    }
    if (res.headersSent) return;
    res.status(status).json(body);
  };
}
