/**
 * Attempts run ahead through the real routes: the events route sends each
 * stored batch to the grading worker, and the submission is graded from the
 * re-run carried ahead, with exactly the result of re-running the stored log
 * from the start in this thread. Batches that arrive out of order, twice, or
 * stored by another process leave the result just as exact.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { AttemptBootstrap, AttemptResult, LogEvent, SubmitInput } from '../../shared/api/attempts.ts';
import { gradeRun } from '../../server/grading/grade-run.ts';
import { openSharedGradingPool, type GradingPool } from '../../server/grading/pool.ts';
import { loadAttemptRun } from '../../server/attempts/rerun-inputs.ts';
import { loadAttempt, showAfter } from '../../server/attempts/store.ts';
import { gradeJobOf } from '../../server/attempts/submit.ts';
import { parseServerTiming } from '../../server/http/server-timing.ts';
import { assignmentId, leads, numbered, pileRamp, readingEvent, startEngine } from './attempts-bench.ts';
import { signIn, startTestApp, type Agent, type TestApp } from './support.ts';

let t: TestApp;
let grading: { pool: GradingPool; release(): Promise<void> };
let week2: number;

beforeAll(async () => {
  t = await startTestApp();
  grading = await openSharedGradingPool({ workers: 1, log: () => {}, aheadBudgetBytes: 64 * 1024 * 1024 });
  week2 = await assignmentId(t.ctx, 'Week 2: dim lights and radio whine');
});
afterAll(async () => {
  await grading.release();
  await t.close();
});

/** The output test by the book, then two minutes more at 2,000 rpm with the pile stepped, about 3 minutes in all. */
const LOG: LogEvent[] = [
  ...leads(0, 'battery-pos', 'battery-neg'),
  ...startEngine(2000, 2000),
  { kind: 'clamp', atMs: 6000, conductor: 'bplus-cable', arrow: 'toward-battery' },
  ...pileRamp(8000, 10, 0.08),
  readingEvent({ id: 'o', test: 'output', quantity: 'current', value: 60, unit: 'A', atMs: 17_000, where: 'B+ cable, pile at about 12 V' }),
  { kind: 'pile', atMs: 20_000, dial01: 0 },
  ...Array.from({ length: 40 }, (_, k): LogEvent => ({ kind: 'pile', atMs: 30_000 + k * 3000, dial01: (k % 5) / 6 })),
  { kind: 'pile', atMs: 160_000, dial01: 0 },
  { kind: 'rpm', atMs: 170_000, rpm: 0 },
];
const SUBMIT_MS = 175_400;

const submission = (atMs: number): SubmitInput => ({
  atMs,
  diagnosis: { faultKind: 'diode-open', verdicts: [{ test: 'output', pass: false }], notes: 'low output, ripple high' },
});

async function begin(email: string): Promise<{ agent: Agent; id: number }> {
  const agent = await signIn(t.app, email);
  const res = await agent.post('/api/attempts').send({ assignmentId: week2 }).expect(201);
  return { agent, id: (res.body as AttemptBootstrap).attempt.id };
}

/** The whole result stored for an attempt. */
async function storedResultOf(id: number): Promise<AttemptResult> {
  return (await loadAttempt(t.ctx.db, id)).result as AttemptResult;
}

/** What grading the stored log from the start, in this thread, gives. */
async function gradedFromStart(id: number, input: SubmitInput): Promise<AttemptResult> {
  const attempt = await loadAttempt(t.ctx.db, id);
  const job = gradeJobOf(id, attempt, await loadAttemptRun(t.ctx.db, id), await showAfter(t.ctx.db, attempt.assignmentId), input);
  return gradeRun(job);
}

describe('an attempt run ahead while the student works', () => {
  it('is graded from the run ahead, exactly as from the start', async () => {
    const { agent, id } = await begin('bo.castellane@cindervalley.example');
    const all = numbered(LOG);
    const before = grading.pool.stats();
    for (let i = 0; i < all.length; i += 6) await agent.post(`/api/attempts/${id}/events`).send({ events: all.slice(i, i + 6) }).expect(200);
    const res = await agent.post(`/api/attempts/${id}/submit`).send(submission(SUBMIT_MS)).expect(200);
    const after = grading.pool.stats();
    expect(after.batchesAhead - before.batchesAhead).toBe(Math.ceil(all.length / 6));
    expect(after.gradedAhead - before.gradedAhead).toBe(1);
    // It had been run ahead to the sample boundary at or before the last event (170 s).
    expect(after.lastAheadToMs).toBe(170_000);
    // Week 2 shows results when it closes: the student's answer hides them, the stored result is whole.
    expect((res.body as AttemptResult).hidden?.reason).toBe('until-close');
    const result = await storedResultOf(id);
    // Exactly what the re-run from the start gives, and a result with substance (a reading checked, a curve drawn).
    expect(result).toEqual(await gradedFromStart(id, submission(SUBMIT_MS)));
    expect(result.readings).toHaveLength(1);
    expect(result.outputCurve?.fitted.length).toBeGreaterThan(10);
    // The answer says how long its parts took: the grading in the worker is part of the grading, and every part of the whole.
    const timing = parseServerTiming(res.headers['server-timing']);
    expect(Object.keys(timing)).toEqual(['before', 'read', 'worker', 'grade', 'store', 'total']);
    expect(Math.abs(timing.worker! - after.lastWorkerMs!)).toBeLessThanOrEqual(0.05 + 1e-9);
    expect(timing.worker).toBeLessThanOrEqual(timing.grade! + 0.1);
    // Each part is rounded to 0.1 ms, so the parts may sum to a little more than the whole.
    expect(timing.before! + timing.read! + timing.grade! + timing.store!).toBeLessThanOrEqual(timing.total! + 0.2);
  });

  it('stays exact when batches come out of order and twice', async () => {
    const { agent, id } = await begin('cyrus.imbert@cindervalley.example');
    const all = numbered(LOG);
    const post = (from: number, to: number) => agent.post(`/api/attempts/${id}/events`).send({ events: all.slice(from, to) }).expect(200);
    await post(0, 10);
    await post(20, 30); // a gap: stored, not yet in order
    await post(10, 20); // fills it
    await post(10, 20); // and again, as after a lost answer
    await post(30, all.length);
    await agent.post(`/api/attempts/${id}/submit`).send(submission(SUBMIT_MS)).expect(200);
    expect(await storedResultOf(id)).toEqual(await gradedFromStart(id, submission(SUBMIT_MS)));
  });

  it('stays exact when some batches were stored by another process (here: written straight to the database)', async () => {
    const { agent, id } = await begin('eino.marrow@cindervalley.example');
    const all = numbered(LOG);
    await agent.post(`/api/attempts/${id}/events`).send({ events: all.slice(0, 12) }).expect(200);
    // Another process stores events 13-24 and moves the attempt on: this process's worker never sees them.
    for (const { seq, event } of all.slice(12, 24)) {
      await t.ctx.pool.query('insert into attempt_events (attempt_id, seq, sim_time_ms, kind, payload) values ($1, $2, $3, $4, $5)', [id, seq, event.atMs, event.kind, JSON.stringify(event)]);
    }
    await t.ctx.pool.query('update attempts set last_seq = 24 where id = $1', [id]);
    await agent.post(`/api/attempts/${id}/events`).send({ events: all.slice(24) }).expect(200);
    const before = grading.pool.stats();
    await agent.post(`/api/attempts/${id}/submit`).send(submission(SUBMIT_MS)).expect(200);
    expect(await storedResultOf(id)).toEqual(await gradedFromStart(id, submission(SUBMIT_MS)));
    // The run ahead had stopped at event 12 and was dropped at the batch that did not follow on; the job re-ran from the start.
    expect(grading.pool.stats().gradedAhead).toBe(before.gradedAhead);
  });
});
