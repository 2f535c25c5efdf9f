import type { Request } from 'express';
import type { z } from 'zod';
import { zodToHttp } from './errors.ts';

/** A value checked against a schema; a failure is a 400 naming the field under `where`. */
export function parseValue<S extends z.ZodType>(schema: S, value: unknown, where: 'body' | 'query' | 'params'): z.infer<S> {
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
