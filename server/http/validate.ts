import type { Request } from 'express';
import type { z } from 'zod';
import { HttpError, zodToHttp } from './errors.ts';

/**
 * A NUL character in a path or query parameter, refused naming the
 * parameter before any schema sees it: PostgreSQL cannot store NUL in text,
 * and its error would name no field.
 */
function refuseNul(value: unknown): void {
  if (!value || typeof value !== 'object') return;
  for (const [name, v] of Object.entries(value)) {
    const values: unknown[] = Array.isArray(v) ? v : [v];
    if (values.some((x) => typeof x === 'string' && x.includes('\u0000'))) {
      throw new HttpError(400, `${name}: must not contain NUL characters`, { field: name, issues: [{ path: name, message: 'must not contain NUL characters' }] });
    }
  }
}

/** A value checked against a schema; a failure is a 400 naming the field under `where`. */
export function parseValue<S extends z.ZodType>(schema: S, value: unknown, where: 'body' | 'query' | 'params'): z.infer<S> {
  if (where !== 'body') refuseNul(value);
  const r = schema.safeParse(value);
  if (!r.success) throw zodToHttp(r.error, where);
  return r.data;
}

export function parseBody<S extends z.ZodType>(schema: S, req: Request): z.infer<S> {
  return parseValue(schema, req.body ?? {}, 'body');
}

export function parseQuery<S extends z.ZodType>(schema: S, req: Request): z.infer<S> {
  return parseValue(schema, req.query ?? {}, 'query');
}

export function parseParams<S extends z.ZodType>(schema: S, req: Request): z.infer<S> {
  return parseValue(schema, req.params ?? {}, 'params');
}
