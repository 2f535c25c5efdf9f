/**
 * The event stream's framing (HTML Living Standard, "Server-sent events":
 * `event:`, `id:` and `data:` lines, a blank line after each message), and a
 * board update of several attempts written to the socket at once.
 */
import { EventEmitter } from 'node:events';
import type { Request, Response } from 'express';
import { describe, expect, it } from 'vitest';
import { openSse } from '../../server/live/sse.ts';

/** Just enough of a request and response for openSse, recording each write. */
function fakeExchange() {
  const writes: string[] = [];
  const headers = new Map<string, string>();
  const req = Object.assign(new EventEmitter(), { socket: { setNoDelay: () => undefined, setTimeout: () => undefined } });
  const res = Object.assign(new EventEmitter(), {
    statusCode: 0,
    status(code: number) {
      res.statusCode = code;
      return res;
    },
    setHeader: (name: string, value: string) => void headers.set(name.toLowerCase(), value),
    flushHeaders: () => undefined,
    write: (chunk: string) => writes.push(chunk) > 0,
    end: () => res.emit('close'),
  });
  return { req: req as unknown as Request, res: res as unknown as Response, writes, headers, statusOf: () => res.statusCode };
}

/** The messages of a stream's text, as a browser's EventSource parses them. */
function parse(text: string): { event: string; id?: string; data: unknown }[] {
  return text
    .split('\n\n')
    .filter((block) => block.split('\n').some((l) => l.startsWith('data: ')))
    .map((block) => {
      const field = (name: string) => block.split('\n').find((l) => l.startsWith(`${name}: `))?.slice(name.length + 2);
      const id = field('id');
      return { event: field('event') ?? 'message', ...(id === undefined ? {} : { id }), data: JSON.parse(field('data')!) as unknown };
    });
}

describe('an event stream', () => {
  it('opens with the headers that keep proxies from buffering and a reconnect delay', () => {
    const x = fakeExchange();
    openSse(x.req, x.res);
    expect(x.statusOf()).toBe(200);
    expect(x.headers.get('content-type')).toBe('text/event-stream; charset=utf-8');
    expect(x.headers.get('x-accel-buffering')).toBe('no');
    expect(x.writes).toEqual(['retry: 1000\n\n']);
  });

  it('frames one message with its event, id and data', () => {
    const x = fakeExchange();
    const sse = openSse(x.req, x.res);
    sse.send('injection', { sealed: 'abc', line: 'two\nlines' }, 7);
    expect(x.writes[1]).toBe('event: injection\nid: 7\ndata: {"sealed":"abc","line":"two\\nlines"}\n\n');
    expect(parse(x.writes[1]!)).toEqual([{ event: 'injection', id: '7', data: { sealed: 'abc', line: 'two\nlines' } }]);
  });

  it('writes several messages at once, each framed as when sent alone', () => {
    const alone = fakeExchange();
    const one = openSse(alone.req, alone.res);
    const together = fakeExchange();
    const many = openSse(together.req, together.res);
    const messages = [1, 2, 3].map((n) => ({ event: 'attempt', data: { attemptId: n, simTimeMs: n * 1000 } }));
    for (const m of messages) one.send(m.event, m.data);
    many.sendAll(messages);
    expect(together.writes).toHaveLength(2);
    expect(together.writes[1]).toBe(alone.writes.slice(1).join(''));
    expect(parse(together.writes[1]!)).toEqual(messages);
    many.sendAll([]);
    expect(together.writes).toHaveLength(2);
  });

  it('writes nothing once closed, and runs its cleanup once', () => {
    const x = fakeExchange();
    const sse = openSse(x.req, x.res);
    let cleaned = 0;
    sse.onClose(() => cleaned++);
    sse.end();
    sse.send('attempt', {});
    sse.sendAll([{ event: 'attempt', data: {} }]);
    x.res.emit('close');
    expect(x.writes).toEqual(['retry: 1000\n\n']);
    expect(cleaned).toBe(1);
    expect(sse.closed()).toBe(true);
  });
});
