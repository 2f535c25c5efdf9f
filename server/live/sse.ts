/**
 * Server-Sent Events on an Express response: headers that keep proxies from
 * buffering, a reconnect delay for the browser, a comment every few seconds
 * so idle connections stay open, and one `close` for cleanup.
 */
import type { Request, Response } from 'express';

export interface SseMessage {
  event: string;
  data: unknown;
  id?: string | number;
}

export interface SseStream {
  send(event: string, data: unknown, id?: string | number): void;
  /** Several messages in one write: one system call and one wake-up of the reader, not one per message. */
  sendAll(messages: readonly SseMessage[]): void;
  comment(text: string): void;
  closed(): boolean;
  /** Runs once, when the client goes away or the server ends the stream. */
  onClose(fn: () => void): void;
  end(): void;
}

export const SSE_RETRY_MS = 1_000;
const HEARTBEAT_MS = 15_000;

/** One message as the event stream format writes it (data as one line of JSON). */
function frame({ event, data, id }: SseMessage): string {
  return `event: ${event}\n${id === undefined ? '' : `id: ${id}\n`}data: ${JSON.stringify(data)}\n\n`;
}

export function openSse(req: Request, res: Response): SseStream {
  res.status(200);
  res.setHeader('Content-Type', 'text/event-stream; charset=utf-8');
  res.setHeader('Cache-Control', 'no-store, no-transform');
  res.setHeader('Connection', 'keep-alive');
  res.setHeader('X-Accel-Buffering', 'no');
  res.flushHeaders();
  req.socket.setNoDelay(true);
  req.socket.setTimeout(0);
  res.write(`retry: ${SSE_RETRY_MS}\n\n`);

  let isClosed = false;
  const closers: (() => void)[] = [];
  const heartbeat = setInterval(() => {
    if (!isClosed) res.write(': ping\n\n');
  }, HEARTBEAT_MS);
  heartbeat.unref();

  const finish = () => {
    if (isClosed) return;
    isClosed = true;
    clearInterval(heartbeat);
    for (const fn of closers.splice(0)) {
      try {
        fn();
      } catch {
        // cleanup of one subscriber must not stop the others
      }
    }
  };
  req.on('close', finish);
  res.on('close', finish);

  return {
    send(event, data, id) {
      if (!isClosed) res.write(frame({ event, data, ...(id === undefined ? {} : { id }) }));
    },
    sendAll(messages) {
      if (!isClosed && messages.length > 0) res.write(messages.map(frame).join(''));
    },
    comment(text) {
      if (!isClosed) res.write(`: ${text.replace(/\n/g, ' ')}\n\n`);
    },
    closed: () => isClosed,
    onClose(fn) {
      if (isClosed) fn();
      else closers.push(fn);
    },
    end() {
      if (!isClosed) res.end();
      finish();
    },
  };
}
