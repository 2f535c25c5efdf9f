/**
 * A class board's stream, once it is open: notifications within
 * BOARD_COALESCE_MS make one update for every attempt they name (coalesce);
 * an attempt gone from the class, or a reconnect of the notification
 * connection, sends the whole board again (resync); every
 * BOARD_RECHECK_SECONDS the running attempts' versions are read, to catch
 * what notifications missed (recheck); and while the notification
 * connection is down the whole board is sent every FALLBACK_POLL_MS (poll).
 */
import type { BoardAttempt, BoardSnapshot } from '../../shared/api/live.ts';
import type { AppContext } from '../context.ts';
import type { DbOrTx } from '../db/client.ts';
import { ATTEMPT_CHANNEL, BENCH_CLOCK_CHANNEL, INJECTION_CHANNEL, type LiveBus } from '../db/live-bus.ts';
import { boardAttempts, boardVersionOf, boardVersions, className, classBoard, type BoardRuns } from './board.ts';
import type { SseStream } from './sse.ts';

/** While the notification connection is down, streams look for news this often. */
export const FALLBACK_POLL_MS = 2_000;
/** Notifications that arrive within this window make one board update, for every attempt they name at once. */
const BOARD_COALESCE_MS = 250;

/** The whole board of a class: its name and its attempts. */
export async function boardSnapshot(db: DbOrTx, classId: number, runs: BoardRuns): Promise<BoardSnapshot> {
  const [name, list] = await Promise.all([className(db, classId), classBoard(db, classId, runs)]);
  return { classId, className: name, attempts: list };
}

export interface BoardFeed {
  db: DbOrTx;
  bus: LiveBus;
  runs: BoardRuns;
  log: AppContext['log'];
  /** How often the running attempts are checked against what was sent, while notifications arrive. */
  recheckSeconds: number;
}

/** Feeds an open stream from the board snapshot `first` on, until the stream closes. */
export async function feedBoard(feed: BoardFeed, classId: number, sse: SseStream, first: BoardSnapshot): Promise<void> {
  const { db, bus, runs, log, recheckSeconds } = feed;
  // What the board was last sent of each running attempt, to tell what a check of the database finds changed.
  const shown = new Map<number, string>();
  const show = (entries: readonly BoardAttempt[]) => {
    for (const e of entries) {
      if (e.status === 'running') shown.set(e.attemptId, boardVersionOf(e));
      else shown.delete(e.attemptId);
    }
  };
  const due = new Set<number>();
  let timer: NodeJS.Timeout | null = null;
  let running = false;
  const run = async () => {
    timer = null;
    if (running) return schedule();
    running = true;
    const ids = [...due];
    due.clear();
    try {
      const entries = await boardAttempts(db, classId, ids, runs);
      for (const entry of entries) if (entry.status !== 'running') runs.forget(entry.attemptId);
      // One write for the whole update: with a class at work, one per attempt would be hundreds of writes a second.
      sse.sendAll(entries.map((entry) => ({ event: 'attempt', data: entry })));
      show(entries);
      // An attempt on the board that is no longer the class's (deleted, or its student moved): the board starts over.
      const returned = new Set(entries.map((e) => e.attemptId));
      if (ids.some((id) => shown.has(id) && !returned.has(id))) void resync();
    } catch (err) {
      // Kept for the next update, as if they had not been taken.
      for (const id of ids) due.add(id);
      log('warn', 'board update failed', err);
    } finally {
      running = false;
    }
  };
  function schedule(attemptId?: number) {
    if (attemptId !== undefined && Number.isInteger(attemptId)) due.add(attemptId);
    if (!timer && due.size > 0 && !sse.closed()) timer = setTimeout(() => void run(), BOARD_COALESCE_MS);
  }
  const resync = async () => {
    try {
      const snap = await boardSnapshot(db, classId, runs);
      shown.clear();
      show(snap.attempts);
      sse.send('snapshot', snap);
    } catch (err) {
      log('warn', 'board snapshot failed', err);
    }
  };
  /** Every so often, what notifications may have missed: the attempts whose version differs from the one sent, through the usual update. */
  const recheck = async () => {
    try {
      const now = await boardVersions(db, classId);
      for (const [id, version] of now) if (shown.get(id) !== version) schedule(id);
      for (const id of shown.keys()) if (!now.has(id)) schedule(id);
    } catch (err) {
      log('warn', 'board check failed', err);
    }
  };

  const unsubscribe = [
    await bus.subscribe(ATTEMPT_CHANNEL, (p) => schedule(Number(p))),
    await bus.subscribe(INJECTION_CHANNEL, (p) => schedule(Number(p.split(':')[0]))),
    await bus.subscribe(BENCH_CLOCK_CHANNEL, (p) => schedule(Number(p))),
    bus.onReconnect(() => void resync()),
  ];
  // Without notifications, the whole board again every FALLBACK_POLL_MS; with them, a light check every BOARD_RECHECK_SECONDS.
  let lastCheckAt = Date.now();
  const poll = setInterval(() => {
    if (!bus.connected()) {
      void resync();
      return;
    }
    if (Date.now() - lastCheckAt < recheckSeconds * 1000) return;
    lastCheckAt = Date.now();
    void recheck();
  }, Math.min(FALLBACK_POLL_MS, recheckSeconds * 1000));
  poll.unref();
  sse.onClose(() => {
    for (const u of unsubscribe) u();
    clearInterval(poll);
    if (timer) clearTimeout(timer);
  });
  show(first.attempts);
  sse.send('snapshot', first);
}
