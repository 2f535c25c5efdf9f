/**
 * The grading pool: a submission graded on the worker thread gets exactly the
 * result the request's own thread gives; a worker that cannot load leaves
 * grading in-thread with one warning; a worker that dies, overruns or refuses
 * a job fails that job (503, or its own error) and the next job is graded;
 * closing fails what is waiting.
 */
import { afterEach, describe, expect, it } from 'vitest';
import type { InputEvent } from '../../sim/inputs.ts';
import { compileCar } from '../../sim/compiled-car.ts';
import { faultChange } from '../../sim/faults.ts';
import { HttpError } from '../../server/http/errors.ts';
import { gradeRun, warmUpJob, type GradeJob } from '../../server/grading/grade-run.ts';
import { gradeSubmission, openSharedGradingPool, startGradingPool, type GradingPool } from '../../server/grading/pool.ts';

const logged: { level: string; message: string }[] = [];
const log = (level: 'info' | 'warn' | 'error', message: string) => void logged.push({ level, message });
const pools: GradingPool[] = [];
async function pool(opts: Partial<Parameters<typeof startGradingPool>[0]> = {}): Promise<GradingPool> {
  const p = await startGradingPool({ workers: 1, log, ...opts });
  pools.push(p);
  return p;
}
afterEach(async () => {
  await Promise.all(pools.splice(0).map((p) => p.close()));
  logged.length = 0;
});

/** A 10-minute practice run on a car with a weak battery and a slipping belt injected live at 4 minutes, two readings (one wrong), no curve. */
function liveFaultJob(): GradeJob {
  const job = warmUpJob(600);
  job.definition.faults = [{ id: 'weak', kind: 'battery-weak', severity01: 0.6, onsetS: 0, intermittent: null }];
  job.car = compileCar(job.definition.vehicle.params, job.definition.faults, job.definition.vehicle.name);
  const slip = { id: 'live-3', kind: 'belt-slip' as const, severity01: 0.8, onsetS: 240, intermittent: null };
  const events: InputEvent[] = [
    ...job.events,
    { kind: 'change-apply', atMs: 240_000, change: faultChange(slip) },
    { kind: 'clamp', atMs: 300_000, conductor: 'bplus-cable', arrow: 'toward-battery' },
  ];
  job.events = events.sort((a, b) => a.atMs - b.atMs);
  job.faults = [...job.definition.faults, slip];
  job.mode = 'practice';
  job.showCurve = false;
  job.seed = 1234;
  job.readings = [
    { id: 'r1', test: 'regulated-voltage', quantity: 'voltage', value: 14.1, unit: 'V', atMs: 200_000, where: 'battery posts, 2,000 rpm' },
    { id: 'r2', test: 'output', quantity: 'current', value: 90, unit: 'A', atMs: 400_000, where: 'B+ cable' },
  ];
  job.submission = { atMs: 600_000, diagnosis: { faultKind: 'belt-slip', verdicts: [{ test: 'regulated-voltage', pass: true }], notes: 'belt squeals under load' } };
  return job;
}

describe('the grading pool', () => {
  it('grades on its worker exactly as the request thread does', async () => {
    const p = await pool();
    const jobs = [warmUpJob(600), liveFaultJob(), { ...warmUpJob(90), showFeedback: false }];
    const inWorker = await Promise.all(jobs.map((j) => p.grade(j)));
    const inThread = jobs.map((j) => gradeRun(j));
    expect(inWorker).toEqual(inThread);
    // The jobs did go to the worker, and the fixtures differ from one another.
    expect(p.stats()).toMatchObject({ workers: 1, gradedInWorker: 3, gradedInThread: 0, inThreadBecause: null });
    expect(inThread[0]!.outputCurve).toBeDefined();
    expect(inThread[1]!.outputCurve).toBeUndefined();
    expect(inThread[1]!.fault.actual).toEqual(expect.arrayContaining(['belt-slip', 'battery-weak']));
    expect(inThread[2]!.feedback).toEqual([]);
  });

  it('grades in the request thread, warning once, when the worker cannot load', async () => {
    // The TypeScript module itself, with no loader: Node cannot load it.
    const p = await pool({ workerUrl: new URL('../../server/grading/worker.ts', import.meta.url), execArgv: [] });
    expect(p.stats().workers).toBe(0);
    expect(p.stats().inThreadBecause).toMatch(/could not start/);
    const job = warmUpJob(30);
    expect(await p.grade(job)).toEqual(gradeRun(job));
    await p.grade(job);
    expect(p.stats()).toMatchObject({ gradedInWorker: 0, gradedInThread: 2 });
    expect(logged.filter((l) => l.level === 'warn')).toHaveLength(1);
  });

  it('grades in the request thread with no workers asked for', async () => {
    const p = await pool({ workers: 0 });
    const job = warmUpJob(30);
    expect(await p.grade(job)).toEqual(gradeRun(job));
    expect(p.stats()).toMatchObject({ workers: 0, gradedInThread: 1, inThreadBecause: 'GRADING_WORKERS is 0' });
    expect(logged.filter((l) => l.level === 'warn')).toHaveLength(0);
  });

  const double = new URL('./grading-worker-double.mjs', import.meta.url);
  const at = (atMs: number): GradeJob => {
    const job = warmUpJob(30);
    job.submission = { ...job.submission, atMs };
    return job;
  };

  it('answers 503 for the job of a worker that dies, replaces it, and grades the next', async () => {
    const p = await pool({ workerUrl: double });
    const dying = p.grade(at(1));
    const next = p.grade(at(10));
    await expect(dying).rejects.toMatchObject({ status: 503, message: expect.stringMatching(/stopped unexpectedly/) });
    expect(await next).toEqual({ grade: 42, stand: 'in' });
    expect(p.stats()).toMatchObject({ workers: 1, replaced: 1, gradedInWorker: 1, inThreadBecause: null });
  });

  it('answers 503 for a job that overruns, replaces the worker, and grades the next', async () => {
    const p = await pool({ workerUrl: double, jobTimeoutMs: 200 });
    const stuck = p.grade(at(2));
    const next = p.grade(at(10));
    await expect(stuck).rejects.toMatchObject({ status: 503, message: expect.stringMatching(/too long/) });
    expect(await next).toEqual({ grade: 42, stand: 'in' });
    expect(p.stats()).toMatchObject({ replaced: 1, gradedInWorker: 1 });
  });

  it('passes on an HTTP error the worker reports', async () => {
    const p = await pool({ workerUrl: double });
    const err = await p.grade(at(3)).catch((e: unknown) => e);
    expect(err).toBeInstanceOf(HttpError);
    expect(err).toMatchObject({ status: 409, message: 'refused by the stand-in', details: { field: 'atMs' } });
    expect(p.stats().replaced).toBe(0);
  });

  it('fails the running and the queued jobs with 503 when it closes, and refuses new ones', async () => {
    const p = await pool({ workerUrl: double });
    const running = p.grade(at(2)).catch((e: unknown) => e);
    const queued = p.grade(at(10)).catch((e: unknown) => e);
    await new Promise((r) => setTimeout(r, 50));
    await p.close();
    expect(await running).toMatchObject({ status: 503, message: expect.stringMatching(/shutting down/) });
    expect(await queued).toMatchObject({ status: 503, message: expect.stringMatching(/shutting down/) });
    await expect(p.grade(at(10))).rejects.toMatchObject({ status: 503 });
    expect(p.stats().workers).toBe(0);
  });
});

describe("the process's pool", () => {
  it('is shared by the servers of a process, used by submissions, and closed by the last to release it', async () => {
    const job = warmUpJob(30);
    const first = await openSharedGradingPool({ workers: 1, log });
    const second = await openSharedGradingPool({ workers: 1, log });
    expect(second.pool).toBe(first.pool);
    expect(await gradeSubmission(job)).toEqual(gradeRun(job));
    expect(first.pool.stats().gradedInWorker).toBe(1);
    await first.release();
    expect(await gradeSubmission(job)).toEqual(gradeRun(job));
    expect(first.pool.stats().gradedInWorker).toBe(2);
    await second.release();
    expect(first.pool.stats().workers).toBe(0);
    // With no pool open, submissions are graded in this thread.
    expect(await gradeSubmission(job)).toEqual(gradeRun(job));
    expect(first.pool.stats().gradedInWorker).toBe(2);
  });
});
