/**
 * CSRF defence for unsafe methods: a token kept in the session must come back
 * in the X-CSRF-Token header (a header a cross-site form cannot set), and a
 * browser's Origin, when sent, must be this site.
 */
import { randomBytes, timingSafeEqual } from 'node:crypto';
import type { Request, RequestHandler } from 'express';
import { HttpError } from '../http/errors.ts';

export const CSRF_HEADER = 'x-csrf-token';
const SAFE = new Set(['GET', 'HEAD', 'OPTIONS']);

export function newCsrfToken(): string {
  return randomBytes(24).toString('base64url');
}

/** The session's token, made when missing (this starts an anonymous session). */
export function csrfTokenFor(req: Request): string {
  if (!req.session.csrfToken) req.session.csrfToken = newCsrfToken();
  return req.session.csrfToken;
}

function sameToken(a: string, b: string): boolean {
  const x = Buffer.from(a);
  const y = Buffer.from(b);
  return x.length === y.length && timingSafeEqual(x, y);
}

export const csrfProtection: RequestHandler = (req, _res, next) => {
  if (SAFE.has(req.method)) return next();
  const origin = req.get('origin');
  if (origin) {
    let host: string | null = null;
    try {
      host = new URL(origin).host;
    } catch {
      host = null;
    }
    if (host !== req.get('host')) return next(new HttpError(403, 'Cross-site request refused', { field: 'origin' }));
  }
  const sent = req.get(CSRF_HEADER);
  const expected = req.session?.csrfToken;
  if (!sent || !expected || !sameToken(sent, expected)) {
    return next(new HttpError(403, 'Missing or stale CSRF token; reload the page and try again', { field: CSRF_HEADER }));
  }
  next();
};
