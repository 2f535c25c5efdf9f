/**
 * The one way the client talks to the server. It keeps the CSRF token, sends
 * it on unsafe methods, and turns failures into `ApiError`s; what to show is
 * the caller's business.
 */
import type { z } from 'zod';
import type { ApiErrorBody } from '../../shared/api/errors.ts';

export class ApiError extends Error {
  constructor(
    readonly status: number,
    message: string,
    readonly field?: string,
    readonly issues?: { path: string; message: string }[],
  ) {
    super(message);
  }
}

let csrfToken: string | null = null;

export function setCsrfToken(token: string | null): void {
  csrfToken = token;
}

type Method = 'GET' | 'POST' | 'PUT' | 'PATCH' | 'DELETE';

interface RequestOptions<T> {
  body?: unknown;
  query?: Record<string, string | number | boolean | undefined | null>;
  schema?: z.ZodType<T>;
  signal?: AbortSignal;
  /** A FormData body (file uploads) instead of JSON. */
  form?: FormData;
}

async function refreshCsrf(): Promise<void> {
  const res = await fetch('/api/auth/me', { credentials: 'same-origin' });
  if (res.ok) {
    const body = (await res.json()) as { csrfToken?: string };
    csrfToken = body.csrfToken ?? null;
  }
}

async function request<T>(method: Method, path: string, opts: RequestOptions<T> = {}, retried = false): Promise<T> {
  const url = new URL(path, window.location.origin);
  for (const [k, v] of Object.entries(opts.query ?? {})) {
    if (v !== undefined && v !== null && v !== '') url.searchParams.set(k, String(v));
  }
  const headers: Record<string, string> = { Accept: 'application/json' };
  if (method !== 'GET') {
    if (!csrfToken) await refreshCsrf();
    if (csrfToken) headers['X-CSRF-Token'] = csrfToken;
  }
  let body: BodyInit | undefined;
  if (opts.form) body = opts.form;
  else if (opts.body !== undefined) {
    headers['Content-Type'] = 'application/json';
    body = JSON.stringify(opts.body);
  }
  let res: Response;
  try {
    res = await fetch(url, { method, headers, body, credentials: 'same-origin', signal: opts.signal });
  } catch (err) {
    if ((err as Error).name === 'AbortError') throw err;
    throw new ApiError(0, 'The server cannot be reached; check the connection');
  }
  if (res.status === 403 && !retried && method !== 'GET') {
    const peek = (await res.clone().json().catch(() => null)) as ApiErrorBody | null;
    if (peek?.error.field === 'x-csrf-token') {
      await refreshCsrf();
      return request(method, path, opts, true);
    }
  }
  if (res.status === 204) return undefined as T;
  const text = await res.text();
  const data: unknown = text ? JSON.parse(text) : undefined;
  if (!res.ok) {
    const err = (data as ApiErrorBody | undefined)?.error;
    throw new ApiError(res.status, err?.message ?? `Request failed (${res.status})`, err?.field, err?.issues);
  }
  return opts.schema ? opts.schema.parse(data) : (data as T);
}

export const api = {
  get: <T>(path: string, opts?: RequestOptions<T>) => request<T>('GET', path, opts),
  post: <T>(path: string, body?: unknown, opts?: RequestOptions<T>) => request<T>('POST', path, { ...opts, body }),
  put: <T>(path: string, body?: unknown, opts?: RequestOptions<T>) => request<T>('PUT', path, { ...opts, body }),
  patch: <T>(path: string, body?: unknown, opts?: RequestOptions<T>) => request<T>('PATCH', path, { ...opts, body }),
  delete: <T>(path: string, opts?: RequestOptions<T>) => request<T>('DELETE', path, opts),
  upload: <T>(path: string, form: FormData, opts?: RequestOptions<T>) => request<T>('POST', path, { ...opts, form }),
};
