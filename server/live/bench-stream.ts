/**
 * The bench's stream of injections, once it is open: every injection not yet
 * logged, as the change it makes, once per connection (a reconnect gets
 * again those still unlogged; the bench skips any it has already applied),
 * then a `status` event when the attempt ends. The first sending of each is
 * recorded as its delivery. Notifications wake it; while the notification
 * connection is down it looks every FALLBACK_POLL_MS.
 */
import { eq } from 'drizzle-orm';
import type { BenchInjection } from '../../shared/api/live.ts';
import type { AppContext } from '../context.ts';
import type { DbOrTx } from '../db/client.ts';
import { ATTEMPT_CHANNEL, INJECTION_CHANNEL, type LiveBus } from '../db/live-bus.ts';
import { attempts } from '../db/schema.ts';
import { FALLBACK_POLL_MS } from './board-stream.ts';
import { markDelivered, toBenchMessage, unappliedInjections } from './injections.ts';
import type { SseStream } from './sse.ts';

async function attemptStatus(db: DbOrTx, attemptId: number): Promise<string | null> {
  const [a] = await db.select({ status: attempts.status }).from(attempts).where(eq(attempts.id, attemptId));
  return a?.status ?? null;
}

/** Feeds an open bench stream until it closes or the attempt ends. */
export async function feedBench(feed: { db: DbOrTx; bus: LiveBus; log: AppContext['log'] }, attemptId: number, sse: SseStream): Promise<void> {
  const { db, bus, log } = feed;
  const sent = new Set<number>();
  let busy = false;
  let again = false;

  const flush = async (): Promise<void> => {
    if (busy) {
      again = true;
      return;
    }
    busy = true;
    try {
      do {
        again = false;
        const rows = await unappliedInjections(db, attemptId);
        for (const row of rows) {
          if (sent.has(row.id) || sse.closed()) continue;
          sent.add(row.id);
          const message: BenchInjection = toBenchMessage(row);
          await markDelivered(db, row);
          sse.send('injection', message, row.id);
        }
        if ((await attemptStatus(db, attemptId)) !== 'running') {
          sse.send('status', { attemptId, status: 'submitted' });
          sse.end();
        }
      } while (again && !sse.closed());
    } catch (err) {
      log('warn', 'bench stream update failed', err);
    } finally {
      busy = false;
    }
  };

  const unsubscribe = [
    await bus.subscribe(INJECTION_CHANNEL, (p) => {
      if (p.startsWith(`${attemptId}:`)) void flush();
    }),
    await bus.subscribe(ATTEMPT_CHANNEL, (p) => {
      if (p === String(attemptId)) void flush();
    }),
    bus.onReconnect(() => void flush()),
  ];
  const poll = setInterval(() => {
    if (!bus.connected()) void flush();
  }, FALLBACK_POLL_MS);
  poll.unref();
  sse.onClose(() => {
    for (const u of unsubscribe) u();
    clearInterval(poll);
  });
  sse.send('status', { attemptId, status: 'running' });
  await flush();
}
