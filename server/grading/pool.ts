/**
 * Grading off the event loop: a few worker threads (GRADING_WORKERS, one by
 * default) that run `gradeRun`, so a submission's re-run does not hold up the
 * requests of everyone else at the bench.
 *
 * - Each worker warms up (rectifier tables, two graded runs of a made-up
 *   attempt, a few seconds) before it takes a job; jobs wait in a queue while
 *   every worker is busy or warming. Starting the pool waits until the workers
 *   have loaded (so a worker that cannot load is known), not for the warm-up.
 * - A worker that dies or overruns its job is replaced; the job it held fails
 *   with a 503 (the submission's transaction rolls back, so submitting again
 *   works), and the queued jobs go to the replacement.
 * - When no worker can start (its module does not load, or it dies while
 *   warming up), grading falls back to the request's thread, with one warning
 *   in the log; a replacement that cannot start is not retried.
 *   GRADING_WORKERS=0 grades there from the start.
 * - `close` stops the workers and fails what is still waiting with a 503.
 * - `ahead` sends a stored batch to the worker that will grade the attempt
 *   (chosen by attempt id), which runs the attempt ahead between jobs
 *   (run-ahead.ts); that attempt's job waits for that worker. Batches are
 *   sent a few times a second in one message, not one message each (a
 *   message wakes the worker), and always before a job for that worker.
 *   Grading in the request's thread always re-runs from the start.
 *
 * Workers are a resource of the process, so `startServer` opens one shared
 * pool per process (counted, for tests that start several servers) and
 * `gradeSubmission` uses it; without an open pool it grades in-thread.
 */
import { Worker } from 'node:worker_threads';
import type { AttemptResult } from '../../shared/api/attempts.ts';
import type { AppContext } from '../context.ts';
import { HttpError } from '../http/errors.ts';
import { gradeRun, type GradeJob } from './grade-run.ts';
import type { FromWorker, ToWorker, WorkerOptions } from './worker.ts';
import type { AheadFeed } from './run-ahead.ts';

export interface GradingPoolOptions {
  /** Worker threads; 0 grades in the request's thread. */
  workers: number;
  log: AppContext['log'];
  /** The workers' Node options; by default the server's own (which load TypeScript under tsx). */
  execArgv?: string[];
  /** A job not answered by then fails with a 503 and its worker is replaced. */
  jobTimeoutMs?: number;
  /** A worker not ready by then counts as one that cannot start. */
  startTimeoutMs?: number;
  /** The worker's module (tests swap in one that misbehaves). */
  workerUrl?: URL;
  /** Memory each worker may hold for attempts run ahead, in bytes (0 runs none ahead). */
  aheadBudgetBytes?: number;
}

export interface GradingStats {
  /** Workers running or warming up. */
  workers: number;
  gradedInWorker: number;
  gradedInThread: number;
  /** Workers replaced after dying or overrunning a job. */
  replaced: number;
  /** Why grading runs in the request's thread, or null while workers grade. */
  inThreadBecause: string | null;
  /** How long the last job took inside its worker, in ms. */
  lastWorkerMs: number | null;
  /** Jobs graded from a re-run carried ahead, and batches sent ahead. */
  gradedAhead: number;
  batchesAhead: number;
  /** The sim time the last job's attempt had been run ahead to (null when it was re-run from the start). */
  lastAheadToMs: number | null;
}

/** Told how long a job took inside its worker, in ms (not called when it was graded in the request's thread). */
export type OnWorkerMs = (ms: number) => void;

export interface GradingPool {
  grade(job: GradeJob, onWorkerMs?: OnWorkerMs): Promise<AttemptResult>;
  /** A batch just stored: the worker that will grade its attempt runs the attempt ahead. */
  ahead(feed: AheadFeed): void;
  stats(): GradingStats;
  close(): Promise<void>;
}

interface Pending {
  id: number;
  job: GradeJob;
  onWorkerMs: OnWorkerMs | undefined;
  resolve(result: AttemptResult): void;
  reject(err: unknown): void;
}

interface Slot {
  worker: Worker;
  /** Batches waiting to be sent ahead to this worker. */
  feeds: AheadFeed[];
  /** Its module loaded: it can grade, once warmed up. */
  loaded: boolean;
  /** Warmed up and taking jobs. */
  ready: boolean;
  job: Pending | null;
  timer: NodeJS.Timeout | null;
  lastError: Error | null;
}

const DEFAULT_WORKER_URL = new URL('./worker-entry.mjs', import.meta.url);

/** How long a stored batch waits to be sent ahead with others. */
const AHEAD_EVERY_MS = 200;

const unavailable = (message: string) => new HttpError(503, message);

export async function startGradingPool(opts: GradingPoolOptions): Promise<GradingPool> {
  const jobTimeoutMs = opts.jobTimeoutMs ?? 30_000;
  const startTimeoutMs = opts.startTimeoutMs ?? 60_000;
  const slots: Slot[] = [];
  const queue: Pending[] = [];
  const startWaiters = new Set<() => void>();
  const counts = { gradedInWorker: 0, gradedInThread: 0, replaced: 0, lastWorkerMs: null as number | null, gradedAhead: 0, batchesAhead: 0, lastAheadToMs: null as number | null };
  const aheadBudgetBytes = opts.aheadBudgetBytes ?? 0;
  let inThreadBecause: string | null = opts.workers > 0 ? null : 'GRADING_WORKERS is 0';
  let closing = false;
  let nextId = 1;

  const settleStart = () => {
    if (slots.every((s) => s.loaded)) for (const w of startWaiters) w();
  };

  const inThread = (job: GradeJob): AttemptResult => {
    counts.gradedInThread++;
    return gradeRun(job);
  };

  const pump = () => {
    if (slots.length === 0) {
      // No worker left to wait for: the queue is graded here.
      for (const p of queue.splice(0)) {
        try {
          p.resolve(inThread(p.job));
        } catch (err) {
          p.reject(err);
        }
      }
      return;
    }
    // In queue order, each job to its attempt's worker (when that one is ready), else to any free one.
    for (let i = 0; i < queue.length; ) {
      const p = queue[i]!;
      const own = p.job.attemptId !== undefined ? slotOf(p.job.attemptId) : null;
      const slot = own?.ready ? (own.job ? null : own) : slots.find((s) => s.ready && !s.job);
      if (slot) {
        queue.splice(i, 1);
        assign(slot, p);
      } else i++;
    }
  };

  /** The worker an attempt's batches and its job go to. */
  const slotOf = (attemptId: number): Slot | null => (slots.length ? slots[attemptId % slots.length]! : null);

  /** Sends the batches waiting for a worker (before a job, so that it sees every batch stored before the submission). */
  const sendFeeds = (slot: Slot) => {
    if (slot.feeds.length === 0) return;
    const feeds = slot.feeds;
    slot.feeds = [];
    try {
      slot.worker.postMessage({ kind: 'ahead', feeds } satisfies ToWorker);
      counts.batchesAhead += feeds.length;
    } catch {
      // Not plain data: nothing is run ahead, and those submissions re-run from the start.
    }
  };
  let feedTimer: NodeJS.Timeout | null = null;
  const sendFeedsSoon = () => {
    if (feedTimer) return;
    feedTimer = setTimeout(() => {
      feedTimer = null;
      for (const slot of slots) sendFeeds(slot);
    }, AHEAD_EVERY_MS);
    feedTimer.unref();
  };

  const assign = (slot: Slot, p: Pending) => {
    sendFeeds(slot);
    try {
      slot.worker.postMessage({ kind: 'grade', id: p.id, job: p.job } satisfies ToWorker);
    } catch (err) {
      // The job could not be copied to the worker (not plain data): the same error as in-thread would be a bug too.
      p.reject(err);
      return;
    }
    slot.job = p;
    slot.timer = setTimeout(() => {
      slot.timer = null;
      slot.job = null;
      opts.log('error', `Grading took longer than ${jobTimeoutMs} ms; replacing the grading worker`);
      p.reject(unavailable('Grading took too long; submit again in a moment'));
      void slot.worker.terminate();
    }, jobTimeoutMs);
  };

  const finish = (slot: Slot, id: number): Pending | null => {
    const p = slot.job;
    if (!p || p.id !== id) return null;
    if (slot.timer) clearTimeout(slot.timer);
    slot.timer = null;
    slot.job = null;
    return p;
  };

  const spawn = () => {
    let worker: Worker;
    try {
      const workerData: WorkerOptions = { aheadBudgetBytes };
      worker = new Worker(opts.workerUrl ?? DEFAULT_WORKER_URL, { workerData, ...(opts.execArgv ? { execArgv: opts.execArgv } : {}) });
    } catch (err) {
      cannotStart(err instanceof Error ? err.message : String(err));
      return;
    }
    const slot: Slot = { worker, feeds: [], loaded: false, ready: false, job: null, timer: null, lastError: null };
    slots.push(slot);
    const startTimer = setTimeout(() => {
      slot.lastError = new Error(`not ready within ${startTimeoutMs} ms`);
      void worker.terminate();
    }, startTimeoutMs);
    startTimer.unref();

    worker.on('message', (msg: FromWorker) => {
      if (msg.kind === 'loaded') {
        slot.loaded = true;
        settleStart();
      } else if (msg.kind === 'ready') {
        clearTimeout(startTimer);
        slot.ready = true;
        opts.log('info', `Grading worker ready (warmed up in ${msg.warmUpMs} ms)`);
        settleStart();
        pump();
      } else if (msg.kind === 'done') {
        const p = finish(slot, msg.id);
        if (p) {
          counts.gradedInWorker++;
          counts.lastWorkerMs = msg.ms;
          counts.lastAheadToMs = msg.aheadToMs ?? null;
          if (msg.aheadToMs !== null && msg.aheadToMs !== undefined) counts.gradedAhead++;
          p.onWorkerMs?.(msg.ms);
          p.resolve(msg.result);
        }
        pump();
      } else {
        const p = finish(slot, msg.id);
        if (p) p.reject(msg.status !== undefined ? new HttpError(msg.status, msg.message, msg.details ?? {}) : new Error(msg.message));
        pump();
      }
    });
    worker.on('error', (err) => {
      slot.lastError = err;
    });
    worker.on('exit', (code) => {
      clearTimeout(startTimer);
      slots.splice(slots.indexOf(slot), 1);
      if (closing) return;
      if (!slot.ready) {
        cannotStart(slot.lastError?.message ?? `exited with code ${code}`);
        return;
      }
      const p = slot.job;
      if (p) {
        finish(slot, p.id);
        p.reject(unavailable('Grading stopped unexpectedly; submit again in a moment'));
      }
      opts.log('error', `Grading worker stopped (exit code ${code}${slot.lastError ? `: ${slot.lastError.message}` : ''}); starting another`);
      counts.replaced++;
      spawn();
      pump();
    });
  };

  const cannotStart = (reason: string) => {
    if (slots.length === 0 && inThreadBecause === null) {
      inThreadBecause = `the grading worker could not start (${reason})`;
      opts.log('warn', `Grading runs in the request's thread: ${inThreadBecause}`);
    }
    settleStart();
    pump();
  };

  const ready = new Promise<void>((resolve) => startWaiters.add(resolve));
  for (let i = 0; i < opts.workers; i++) spawn();
  settleStart();
  await ready;

  return {
    async grade(job, onWorkerMs) {
      if (closing) throw unavailable('The server is shutting down');
      if (slots.length === 0) return inThread(job);
      return new Promise<AttemptResult>((resolve, reject) => {
        queue.push({ id: nextId++, job, onWorkerMs, resolve, reject });
        pump();
      });
    },
    ahead(feed) {
      if (closing || aheadBudgetBytes <= 0) return;
      const slot = slotOf(feed.attemptId);
      if (!slot) return;
      slot.feeds.push(feed);
      sendFeedsSoon();
    },
    stats: () => ({ workers: slots.length, ...counts, inThreadBecause }),
    async close() {
      if (closing) return;
      closing = true;
      if (feedTimer) clearTimeout(feedTimer);
      const stopped = unavailable('The server is shutting down');
      for (const p of queue.splice(0)) p.reject(stopped);
      for (const slot of [...slots]) {
        const p = slot.job;
        if (p) {
          finish(slot, p.id);
          p.reject(stopped);
        }
      }
      await Promise.all([...slots].map((s) => s.worker.terminate()));
    },
  };
}

// ---------------------------------------------------------------------------
// The process's pool

let shared: { pool: Promise<GradingPool>; users: number; started: GradingPool | null } | null = null;

/** Opens the process's pool (or joins the one open); release once per open. */
export async function openSharedGradingPool(opts: GradingPoolOptions): Promise<{ pool: GradingPool; release(): Promise<void> }> {
  if (!shared) shared = { pool: startGradingPool(opts), users: 0, started: null };
  const entry = shared;
  entry.users++;
  const pool = await entry.pool;
  entry.started = pool;
  let released = false;
  return {
    pool,
    async release() {
      if (released) return;
      released = true;
      entry.users--;
      if (entry.users === 0) {
        if (shared === entry) shared = null;
        await pool.close();
      }
    },
  };
}

/** Sends a stored batch ahead to the process's pool, when one is open and has started. */
export function sendAhead(feed: AheadFeed): void {
  shared?.started?.ahead(feed);
}

/** Grades on the process's pool, or in this thread when none is open. */
export async function gradeSubmission(job: GradeJob, onWorkerMs?: OnWorkerMs): Promise<AttemptResult> {
  const pool = shared ? await shared.pool : null;
  return pool ? pool.grade(job, onWorkerMs) : gradeRun(job);
}
