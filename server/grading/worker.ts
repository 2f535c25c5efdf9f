/**
 * A grading worker thread: says it has loaded, builds the rectifier tables,
 * grades a made-up 10-minute attempt twice so the model's code is compiled
 * hot (the first real submission then takes what later ones do), says it is
 * ready, then grades the jobs the pool posts, one at a time. The verdict cache
 * lives here.
 *
 * Between jobs it runs attempts ahead (run-ahead.ts): the pool sends each
 * stored batch, and the worker carries the attempt's re-run on in short
 * slices, so a job that arrives waits at most one slice. A job for an attempt
 * run ahead re-runs only what the last batches have not covered.
 */
import { parentPort, workerData } from 'node:worker_threads';
import { performance } from 'node:perf_hooks';
import { prepareBridgeTables } from '../../sim/bridge.ts';
import { gradeRun, warmUpJob, type GradeJob } from './grade-run.ts';
import { RunAhead, type AheadFeed } from './run-ahead.ts';

export type ToWorker = { kind: 'grade'; id: number; job: GradeJob } | { kind: 'ahead'; feeds: AheadFeed[] };
export type FromWorker =
  | { kind: 'loaded' }
  | { kind: 'ready'; warmUpMs: number }
  | {
      kind: 'done';
      id: number;
      result: ReturnType<typeof gradeRun>;
      ms: number;
      /** The sim time the attempt had been run ahead to, or null when it was re-run from the start. */
      aheadToMs: number | null;
    }
  | { kind: 'failed'; id: number; message: string; status?: number; details?: Record<string, unknown> };

/** What the pool passes a worker when it starts it. */
export interface WorkerOptions {
  /** Memory for attempts run ahead, in bytes. */
  aheadBudgetBytes: number;
}

/**
 * Sim seconds of each warm-up run. One 10-minute run leaves the next one still
 * about twice as slow as the steady state; after two the first real one is not.
 * The jobs are copied the way a posted job is, so the compiled code fits the
 * shape of the objects real jobs arrive in.
 */
const WARM_UP_RUNS = [600, 600];

/** Samples (100 ms of sim time each) per slice of running ahead: about a millisecond of work. */
const AHEAD_SLICE_SAMPLES = 100;

if (parentPort) {
  const port = parentPort;
  const options = (workerData ?? {}) as Partial<WorkerOptions>;
  const ahead = new RunAhead(options.aheadBudgetBytes ?? 0);
  port.postMessage({ kind: 'loaded' } satisfies FromWorker);
  const t0 = performance.now();
  prepareBridgeTables();
  for (const simS of WARM_UP_RUNS) gradeRun(structuredClone(warmUpJob(simS)));
  port.postMessage({ kind: 'ready', warmUpMs: Math.round(performance.now() - t0) } satisfies FromWorker);

  // One slice at a time, through the event loop, so that a job posted meanwhile is taken between slices.
  let scheduled = false;
  const runAhead = () => {
    scheduled = false;
    if (ahead.work(AHEAD_SLICE_SAMPLES)) schedule();
  };
  const schedule = () => {
    if (scheduled) return;
    scheduled = true;
    setImmediate(runAhead);
  };

  port.on('message', (msg: ToWorker) => {
    if (msg.kind === 'ahead') {
      for (const feed of msg.feeds) ahead.feed(feed);
      if (ahead.pending) schedule();
      return;
    }
    const started = performance.now();
    const { job } = msg;
    let reply: FromWorker;
    try {
      const cursor =
        job.attemptId !== undefined
          ? ahead.take({ attemptId: job.attemptId, car: job.car, seed: job.seed, events: job.events, atMs: job.submission.atMs })
          : null;
      const aheadToMs = cursor ? cursor.point.state.timeMs : null;
      reply = { kind: 'done', id: msg.id, result: gradeRun(job, cursor), ms: performance.now() - started, aheadToMs };
    } catch (err) {
      const e = err as { message?: unknown; status?: unknown; details?: unknown };
      reply = {
        kind: 'failed',
        id: msg.id,
        message: typeof e?.message === 'string' ? e.message : String(err),
        ...(typeof e?.status === 'number' ? { status: e.status } : {}),
        ...(typeof e?.details === 'object' && e.details !== null ? { details: e.details as Record<string, unknown> } : {}),
      };
    }
    port.postMessage(reply);
  });
}
