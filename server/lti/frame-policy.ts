/**
 * Which sites may frame Loadline and receive its forms: the registered
 * platforms only. The content security policy's frame-ancestors and
 * form-action take these origins (a deep-linking answer is a form posted to
 * the platform); with no platform registered nobody may frame Loadline.
 *
 * The origins are read at most every FRAME_POLICY_TTL_MS per process (and at
 * once after a registration changes in this process); another process sees a
 * change within that time.
 */
import type { RequestHandler, Response } from 'express';
import type { AppContext } from '../context.ts';
import type { Db } from '../db/client.ts';
import { platformOrigins } from './platforms.ts';

export const FRAME_POLICY_TTL_MS = 30_000;

interface Kept {
  origins: string[];
  readAt: number;
  reading: Promise<string[]> | null;
}

const kept = new WeakMap<Db, Kept>();

/** Forget the origins read, after a registration changed. */
export function forgetFramePolicy(db: Db): void {
  kept.delete(db);
}

async function originsOf(ctx: AppContext): Promise<string[]> {
  let entry = kept.get(ctx.db);
  if (!entry) {
    entry = { origins: [], readAt: 0, reading: null };
    kept.set(ctx.db, entry);
  }
  const now = Date.now();
  if (entry.readAt > 0 && now - entry.readAt < FRAME_POLICY_TTL_MS) return entry.origins;
  const held = entry;
  held.reading ??= platformOrigins(ctx.db)
    .then((origins) => {
      held.origins = origins;
      held.readAt = Date.now();
      return origins;
    })
    .catch((err: unknown) => {
      // The database is away: keep what was known (nothing, at first), so pages are still served.
      ctx.log('warn', 'could not read the platforms for the frame policy', err);
      return held.origins;
    })
    .finally(() => {
      held.reading = null;
    });
  return held.reading;
}

const ORIGINS = Symbol('lti frame origins');

/** Reads the registered platforms' origins for this response's content security policy. */
export function framePolicy(ctx: AppContext): RequestHandler {
  return (_req, res, next) => {
    const fresh = kept.get(ctx.db);
    if (fresh && fresh.readAt > 0 && Date.now() - fresh.readAt < FRAME_POLICY_TTL_MS) {
      (res.locals as Record<symbol, string[]>)[ORIGINS] = fresh.origins;
      return next();
    }
    originsOf(ctx).then(
      (origins) => {
        (res.locals as Record<symbol, string[]>)[ORIGINS] = origins;
        next();
      },
      () => next(),
    );
  };
}

const originsFor = (res: unknown): string[] => ((res as Response).locals as Record<symbol, string[] | undefined> | undefined)?.[ORIGINS] ?? [];

/** The frame-ancestors value: the registered platforms, or 'none'. */
export const frameAncestors = (_req: unknown, res: unknown): string => {
  const origins = originsFor(res);
  return origins.length ? ["'self'", ...origins].join(' ') : "'none'";
};

/** The form-action value: Loadline itself and the registered platforms. */
export const formTargets = (_req: unknown, res: unknown): string => ["'self'", ...originsFor(res)].join(' ');

/** Drops X-Frame-Options where platforms may frame Loadline: frame-ancestors says who may (and outranks it in browsers). */
export const allowPlatformFrames: RequestHandler = (_req, res, next) => {
  if (originsFor(res).length) res.removeHeader('X-Frame-Options');
  next();
};
