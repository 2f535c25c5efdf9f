/**
 * A `Server-Timing` header (W3C Server Timing): how long the parts of one
 * request took on the server, in ms, as a browser's network panel or a load
 * test reads them. Names are tokens; durations are rounded to 0.1 ms.
 */
import { performance } from 'node:perf_hooks';
import type { NextFunction, Request, Response } from 'express';

export class ServerTiming {
  private readonly parts: { name: string; ms: number }[] = [];

  /** `started`: when the request reached the server (performance.now()); by default, now. */
  constructor(private readonly started = performance.now()) {}

  /** Adds `ms` to the part called `name` (a part timed twice, as on a retry, counts both). */
  add(name: string, ms: number): void {
    const part = this.parts.find((p) => p.name === name);
    if (part) part.ms += ms;
    else this.parts.push({ name, ms });
  }

  /** The header's value: every part, then `total` since this was made. */
  header(): string {
    const entries = [...this.parts, { name: 'total', ms: performance.now() - this.started }];
    return entries.map((p) => `${p.name};dur=${p.ms.toFixed(1)}`).join(', ');
  }
}

/** The durations of a `Server-Timing` header by name (parts without a duration are left out). */
export function parseServerTiming(header: string | null | undefined): Record<string, number> {
  const out: Record<string, number> = {};
  for (const entry of (header ?? '').split(',')) {
    const [name, ...params] = entry.trim().split(';');
    const dur = params.map((p) => /^\s*dur=([\d.]+)\s*$/.exec(p)?.[1]).find((d) => d !== undefined);
    if (name && dur !== undefined) out[name.trim()] = Number(dur);
  }
  return out;
}

/**
 * First of the API's middleware: notes when the request reached the server,
 * for `receivedAt`, and gives every answer a `Server-Timing` header with its
 * `total` (unless the route wrote its own): how long the server took from
 * here to the answer's head, as a load test or a browser's network panel
 * reads it beside the time the whole round trip took.
 */
export function markReceived(_req: Request, res: Response, next: NextFunction): void {
  const at = performance.now();
  res.locals.receivedAt = at;
  const writeHead = res.writeHead;
  res.writeHead = function (this: Response, ...args: unknown[]) {
    if (!this.hasHeader('Server-Timing')) this.setHeader('Server-Timing', `total;dur=${(performance.now() - at).toFixed(1)}`);
    return Reflect.apply(writeHead, this, args) as Response;
  } as Response['writeHead'];
  next();
}

/** When the request reached the server (performance.now()), or now when `markReceived` did not run. */
export function receivedAt(res: Response): number {
  const at: unknown = res.locals.receivedAt;
  return typeof at === 'number' ? at : performance.now();
}
