/**
 * Routes are declared through this builder so that every API route carries its
 * access rule, and the whole table can be listed (the authorisation matrix
 * test is generated from it).
 */
import { Router, type RequestHandler } from 'express';
import { requireAccess, type Access } from './guards.ts';

export type Method = 'get' | 'post' | 'put' | 'patch' | 'delete';

export interface RouteSpec {
  method: Method;
  /** Full path as Express sees it, e.g. /api/users/:id */
  path: string;
  access: Access;
}

export interface RouteGroup {
  /** Where the router is mounted, e.g. /api/users */
  base: string;
  router: Router;
  specs: RouteSpec[];
  get(path: string, access: Access, ...handlers: RequestHandler[]): void;
  post(path: string, access: Access, ...handlers: RequestHandler[]): void;
  put(path: string, access: Access, ...handlers: RequestHandler[]): void;
  patch(path: string, access: Access, ...handlers: RequestHandler[]): void;
  delete(path: string, access: Access, ...handlers: RequestHandler[]): void;
}

export function routeGroup(base: string): RouteGroup {
  const router = Router();
  const specs: RouteSpec[] = [];
  const add =
    (method: Method) =>
    (path: string, access: Access, ...handlers: RequestHandler[]) => {
      specs.push({ method, path: `${base}${path === '/' ? '' : path}`, access });
      router[method](path, requireAccess(access), ...handlers);
    };
  return { base, router, specs, get: add('get'), post: add('post'), put: add('put'), patch: add('patch'), delete: add('delete') };
}
