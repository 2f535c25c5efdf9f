/**
 * Live class sessions (/api/live): the instructor's board of running attempts
 * and its stream, fault injection and clearing, and the bench's own stream of
 * injections. Streams are Server-Sent Events fed by LISTEN/NOTIFY, so a
 * student on one server process and the instructor on another see each other.
 */
import { eq } from 'drizzle-orm';
import {
  attemptParamsSchema,
  classParamsSchema,
  clearSchema,
  injectSchema,
  type BenchInjection,
  type BoardAttempt,
  type BoardSnapshot,
} from '../../shared/api/live.ts';
import { requireAttemptInstructor, requireAttemptOwner, requireClassInstructor } from '../accounts/access.ts';
import { currentUser } from '../accounts/guard.ts';
import type { AppContext } from '../context.ts';
import { attempts } from '../db/schema.ts';
import { conflict } from '../http/errors.ts';
import { routeGroup } from '../http/route-table.ts';
import { parseBody, parseParams } from '../http/validate.ts';
import { boardAttempts, boardVersionOf, boardVersions, className, classBoard, createBoardRuns } from './board.ts';
import { ATTEMPT_CHANNEL, BENCH_CLOCK_CHANNEL, INJECTION_CHANNEL, liveBusFor } from '../db/live-bus.ts';
import { createClear, createInjection, injectionViews, listInjections, markDelivered, resolveRows, toBenchMessage, unappliedInjections } from './injections.ts';
import { loadStoredInputs } from '../attempts/rerun-inputs.ts';
import { openSse } from './sse.ts';

/** While the notification connection is down, streams look for news this often. */
const FALLBACK_POLL_MS = 2_000;
/** Notifications that arrive within this window make one board update, for every attempt they name at once. */
const BOARD_COALESCE_MS = 250;

const INSTRUCTORS = ['instructor', 'admin'] as const;

export function liveRoutes(ctx: AppContext) {
  const g = routeGroup('/api/live');
  const runs = createBoardRuns((message, err) => ctx.log('warn', message, err));

  async function snapshot(classId: number): Promise<BoardSnapshot> {
    const [name, list] = await Promise.all([className(ctx.db, classId), classBoard(ctx.db, classId, runs)]);
    return { classId, className: name, attempts: list };
  }

  // A class that does not exist is named as such (404) before whether the user teaches it (403).
  g.get('/classes/:classId/board', INSTRUCTORS, async (req, res) => {
    const { classId } = parseParams(classParamsSchema, req);
    await className(ctx.db, classId);
    await requireClassInstructor(ctx.db, currentUser(req), classId);
    res.json(await snapshot(classId));
  });

  g.get('/classes/:classId/stream', INSTRUCTORS, async (req, res) => {
    const { classId } = parseParams(classParamsSchema, req);
    await className(ctx.db, classId);
    await requireClassInstructor(ctx.db, currentUser(req), classId);
    const first = await snapshot(classId);
    const sse = openSse(req, res);
    const bus = liveBusFor(ctx);

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
        const entries = await boardAttempts(ctx.db, classId, ids, runs);
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
        ctx.log('warn', 'board update failed', err);
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
        const snap = await snapshot(classId);
        shown.clear();
        show(snap.attempts);
        sse.send('snapshot', snap);
      } catch (err) {
        ctx.log('warn', 'board snapshot failed', err);
      }
    };
    /** Every so often, what notifications may have missed: the attempts whose version differs from the one sent, through the usual update. */
    const recheck = async () => {
      try {
        const now = await boardVersions(ctx.db, classId);
        for (const [id, version] of now) if (shown.get(id) !== version) schedule(id);
        for (const id of shown.keys()) if (!now.has(id)) schedule(id);
      } catch (err) {
        ctx.log('warn', 'board check failed', err);
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
      if (Date.now() - lastCheckAt < ctx.env.BOARD_RECHECK_SECONDS * 1000) return;
      lastCheckAt = Date.now();
      void recheck();
    }, Math.min(FALLBACK_POLL_MS, ctx.env.BOARD_RECHECK_SECONDS * 1000));
    poll.unref();
    sse.onClose(() => {
      for (const u of unsubscribe) u();
      clearInterval(poll);
      if (timer) clearTimeout(timer);
    });
    show(first.attempts);
    sse.send('snapshot', first);
  });

  g.get('/attempts/:id/injections', INSTRUCTORS, async (req, res) => {
    const { id } = parseParams(attemptParamsSchema, req);
    await requireAttemptInstructor(ctx.db, currentUser(req), id);
    const [rows, stored] = await Promise.all([listInjections(ctx.db, id), loadStoredInputs(ctx.db, id)]);
    res.json({ injections: injectionViews(rows, resolveRows(rows, stored)) });
  });

  g.post('/attempts/:id/inject', INSTRUCTORS, async (req, res) => {
    const { id } = parseParams(attemptParamsSchema, req);
    const user = currentUser(req);
    await requireAttemptInstructor(ctx.db, user, id);
    const body = parseBody(injectSchema, req);
    const row = await createInjection(ctx.db, id, user.id, body);
    res.status(201).json({ injection: injectionViews([row])[0] });
  });

  g.post('/attempts/:id/clear', INSTRUCTORS, async (req, res) => {
    const { id } = parseParams(attemptParamsSchema, req);
    const user = currentUser(req);
    await requireAttemptInstructor(ctx.db, user, id);
    const body = parseBody(clearSchema, req);
    const row = await createClear(ctx.db, id, user.id, body.injectionId);
    const all = await listInjections(ctx.db, id);
    res.status(201).json({ injection: injectionViews(all).find((v) => v.injectionId === row.id) });
  });

  /**
   * The bench's stream: every injection not yet logged, as the change it
   * makes, once per connection (a reconnect gets again those still unlogged;
   * the bench skips any it has already applied), then a `status` event when
   * the attempt ends. The first sending of each is recorded as its delivery.
   */
  g.get('/attempts/:id/stream', ['student'], async (req, res) => {
    const { id } = parseParams(attemptParamsSchema, req);
    const access = await requireAttemptOwner(ctx.db, currentUser(req), id);
    if (access.status !== 'running') throw conflict('The attempt is no longer running', 'id');
    const sse = openSse(req, res);
    const bus = liveBusFor(ctx);
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
          const rows = await unappliedInjections(ctx.db, id);
          for (const row of rows) {
            if (sent.has(row.id) || sse.closed()) continue;
            sent.add(row.id);
            const message: BenchInjection = toBenchMessage(row);
            await markDelivered(ctx.db, row);
            sse.send('injection', message, row.id);
          }
          const [a] = await ctx.db.select({ status: attempts.status }).from(attempts).where(eq(attempts.id, id));
          if (!a || a.status !== 'running') {
            sse.send('status', { attemptId: id, status: 'submitted' });
            sse.end();
          }
        } while (again && !sse.closed());
      } catch (err) {
        ctx.log('warn', 'bench stream update failed', err);
      } finally {
        busy = false;
      }
    };

    const unsubscribe = [
      await bus.subscribe(INJECTION_CHANNEL, (p) => {
        if (p.startsWith(`${id}:`)) void flush();
      }),
      await bus.subscribe(ATTEMPT_CHANNEL, (p) => {
        if (p === String(id)) void flush();
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
    sse.send('status', { attemptId: id, status: 'running' });
    await flush();
  });

  return g;
}
