/**
 * CSRF defence for unsafe methods: a token must come back in the
 * X-CSRF-Token header (a header a cross-site form cannot set), and a
 * browser's Origin, when sent, must be this site.
 *
 * A signed-in session keeps its token in the session. Before sign-in there
 * is no session to keep it in, and none is stored (a cookieless visitor costs
 * no database row): the token is then an HMAC, under a key derived from the
 * server's secret, of a random value in a cookie of its own, so it is bound
 * to that browser and cannot be made without the secret (a signed
 * double-submit cookie).
 */
import { createHmac, randomBytes, timingSafeEqual } from 'node:crypto';
import type { Request, RequestHandler, Response } from 'express';
import { HttpError } from './errors.ts';

export const CSRF_HEADER = 'x-csrf-token';
/** The anonymous visitor's random value. */
export const CSRF_COOKIE = 'loadline.csrf';
const SAFE = new Set(['GET', 'HEAD', 'OPTIONS']);
const NONCE = /^[A-Za-z0-9_-]{32}$/;

export function newCsrfToken(): string {
  return randomBytes(24).toString('base64url');
}

function sameToken(a: string, b: string): boolean {
  const x = Buffer.from(a);
  const y = Buffer.from(b);
  return x.length === y.length && timingSafeEqual(x, y);
}

/** One cookie's value from the request's Cookie header. */
function cookieValue(req: Request, name: string): string | null {
  const header = req.headers.cookie;
  if (!header) return null;
  for (const part of header.split(';')) {
    const eq = part.indexOf('=');
    if (eq > 0 && part.slice(0, eq).trim() === name) return part.slice(eq + 1).trim();
  }
  return null;
}

export interface CsrfOptions {
  /** The server's secret; the token key is derived from it under a label of its own. */
  secret: string;
  secure: boolean;
}

export interface Csrf {
  /** The token for this request's client: the session's when signed in, else the anonymous one (setting its cookie when missing). */
  tokenFor(req: Request, res: Response): string;
  /** Drops the anonymous cookie (at sign-in: the session's token takes over). */
  forgetAnonymous(res: Response): void;
  protect: RequestHandler;
}

export function csrf(opts: CsrfOptions): Csrf {
  const key = createHmac('sha256', opts.secret).update('loadline csrf key').digest();
  const anonymousToken = (nonce: string) => createHmac('sha256', key).update(nonce).digest('base64url');
  const cookieOptions = { httpOnly: true, sameSite: 'lax' as const, secure: opts.secure, path: '/' };
  const nonceOf = (req: Request): string | null => {
    const v = cookieValue(req, CSRF_COOKIE);
    return v && NONCE.test(v) ? v : null;
  };

  return {
    tokenFor(req, res) {
      if (req.session?.userId) {
        if (!req.session.csrfToken) req.session.csrfToken = newCsrfToken();
        return req.session.csrfToken;
      }
      let nonce = nonceOf(req);
      if (!nonce) {
        nonce = newCsrfToken();
        res.cookie(CSRF_COOKIE, nonce, cookieOptions);
      }
      return anonymousToken(nonce);
    },
    forgetAnonymous(res) {
      res.clearCookie(CSRF_COOKIE, cookieOptions);
    },
    protect(req, _res, next) {
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
      // A stored session has its own token; the anonymous one never stands in for it.
      const sessionToken = req.session?.csrfToken;
      const nonce = sessionToken ? null : nonceOf(req);
      const expected = sessionToken ?? (nonce ? anonymousToken(nonce) : null);
      if (!sent || !expected || !sameToken(sent, expected)) {
        return next(new HttpError(403, 'Missing or stale CSRF token; reload the page and try again', { field: CSRF_HEADER }));
      }
      next();
    },
  };
}
