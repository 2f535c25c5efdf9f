/**
 * A grading worker thread: says it has loaded, builds the rectifier tables,
 * grades a made-up 10-minute attempt twice so the model's code is compiled
 * hot (the first real submission then takes what later ones do), says it is
 * ready, then grades the jobs the pool posts, one at a time. The verdict cache
 * lives here.
 */
import { parentPort } from 'node:worker_threads';
import { performance } from 'node:perf_hooks';
import { prepareBridgeTables } from '../../sim/bridge.ts';
import { gradeRun, warmUpJob, type GradeJob } from './grade-run.ts';

export type ToWorker = { id: number; job: GradeJob };
export type FromWorker =
  | { kind: 'loaded' }
  | { kind: 'ready'; warmUpMs: number }
  | { kind: 'done'; id: number; result: ReturnType<typeof gradeRun>; ms: number }
  | { kind: 'failed'; id: number; message: string; status?: number; details?: Record<string, unknown> };

/**
 * Sim seconds of each warm-up run. One 10-minute run leaves the next one still
 * about twice as slow as the steady state; after two the first real one is not.
 * The jobs are copied the way a posted job is, so the compiled code fits the
 * shape of the objects real jobs arrive in.
 */
const WARM_UP_RUNS = [600, 600];

if (parentPort) {
  const port = parentPort;
  port.postMessage({ kind: 'loaded' } satisfies FromWorker);
  const t0 = performance.now();
  prepareBridgeTables();
  for (const simS of WARM_UP_RUNS) gradeRun(structuredClone(warmUpJob(simS)));
  port.postMessage({ kind: 'ready', warmUpMs: Math.round(performance.now() - t0) } satisfies FromWorker);

  port.on('message', (msg: ToWorker) => {
    const started = performance.now();
    let reply: FromWorker;
    try {
      reply = { kind: 'done', id: msg.id, result: gradeRun(msg.job), ms: performance.now() - started };
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
