/**
 * A client that posts an attempt's events the way the bench does: numbered
 * batches, each resent until the server answers 200 (a network error, a 5xx
 * or a 503 with Retry-After all mean "try again"). Records every failed try.
 */
import type { HttpClient } from '../server/live-fixtures.ts';

export interface SentEvent {
  seq: number;
  event: { kind: 'pile'; atMs: number; dial01: number };
}

export interface Failure {
  status: number | 'network';
  retryAfter: string | null;
  ms: number;
}

export function plannedEvents(count: number): SentEvent[] {
  return Array.from({ length: count }, (_, i) => ({ seq: i + 1, event: { kind: 'pile', atMs: (i + 1) * 100, dial01: ((i * 7) % 20) / 20 } }));
}

export interface Poster {
  failures: Failure[];
  /** Batches acknowledged so far. */
  acknowledged(): number;
  done: Promise<void>;
}

/**
 * Posts `events` in batches of `batchSize` to the attempt, one batch at a
 * time, retrying each until it is stored; gives up after `deadlineMs`.
 */
export function postAll(client: HttpClient, attemptId: number, events: SentEvent[], opts: { batchSize: number; deadlineMs: number; retryMs?: number }): Poster {
  const failures: Failure[] = [];
  let acked = 0;
  const until = Date.now() + opts.deadlineMs;
  const done = (async () => {
    for (let i = 0; i < events.length; i += opts.batchSize) {
      const batch = events.slice(i, i + opts.batchSize);
      for (;;) {
        if (Date.now() > until) throw new Error(`gave up after ${opts.deadlineMs} ms at seq ${batch[0]!.seq}; failures: ${JSON.stringify(failures.slice(-5))}`);
        const t0 = Date.now();
        try {
          const res = await fetch(`${client.baseUrl}/api/attempts/${attemptId}/events`, {
            method: 'POST',
            headers: { 'Content-Type': 'application/json', Cookie: client.cookie, 'X-CSRF-Token': client.csrf },
            body: JSON.stringify({ events: batch }),
            signal: AbortSignal.timeout(15_000),
          });
          await res.text();
          if (res.status === 200) break;
          failures.push({ status: res.status, retryAfter: res.headers.get('retry-after'), ms: Date.now() - t0 });
          if (res.status < 500) throw new Error(`the server refused a batch with ${res.status}`);
        } catch (err) {
          if ((err as Error).message.startsWith('the server refused')) throw err;
          failures.push({ status: 'network', retryAfter: null, ms: Date.now() - t0 });
        }
        await new Promise((r) => setTimeout(r, opts.retryMs ?? 100));
      }
      acked++;
    }
  })();
  return { failures, acknowledged: () => acked, done };
}
