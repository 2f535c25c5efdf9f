import type { Request } from 'express';
import type { z } from 'zod';
import { zodToHttp } from './errors.ts';

export function parseBody<S extends z.ZodType>(schema: S, req: Request): z.infer<S> {
  const r = schema.safeParse(req.body ?? {});
  if (!r.success) throw zodToHttp(r.error, 'body');
  return r.data;
}

export function parseQuery<S extends z.ZodType>(schema: S, req: Request): z.infer<S> {
  const r = schema.safeParse(req.query ?? {});
  if (!r.success) throw zodToHttp(r.error, 'query');
  return r.data;
}

export function parseParams<S extends z.ZodType>(schema: S, req: Request): z.infer<S> {
  const r = schema.safeParse(req.params ?? {});
  if (!r.success) throw zodToHttp(r.error, 'params');
  return r.data;
}
