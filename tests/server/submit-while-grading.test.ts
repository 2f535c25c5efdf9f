/**
 * A submission is graded with no transaction open and no row locked, then
 * stored in a short transaction that checks the log graded is still the
 * stored one. A queue of submissions waiting for the grading workers so
 * holds no database connection, and a batch that arrives while grading is
 * taken in: the submission is graded again with it.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import pg from 'pg';
import type { CarInput as InputEvent } from '../../shared/api/attempts.ts';
import type { AttemptBootstrap, AttemptResult, SubmitInput } from '../../shared/api/attempts.ts';
import { HttpError } from '../../server/http/errors.ts';
import { gradeRun, type GradeJob } from '../../server/grading/grade-run.ts';
import { gradeJobOf, submitAttempt } from '../../server/attempts/submit.ts';
import { loadAttempt, showAfter } from '../../server/attempts/store.ts';
import { loadAttemptRun } from '../../server/attempts/rerun-inputs.ts';
import { studentResult } from '../../server/grading/result-views.ts';
import { leads, numbered, scenarioId, startEngine } from './attempts-bench.ts';
import { signIn, startTestApp, type Agent, type TestApp } from './support.ts';

let t: TestApp;
let scenario: number;
let agent: Agent;

beforeAll(async () => {
  t = await startTestApp();
  scenario = await scenarioId(t.ctx, 'healthy-control-corvane-linden');
  agent = await signIn(t.app, 'ada.brightwater@cindervalley.example');
});
afterAll(async () => {
  await t.close();
});

const LOG: InputEvent[] = [
  ...leads(0, 'battery-pos', 'battery-neg'),
  ...startEngine(2000, 2000),
  { kind: 'clamp', atMs: 6000, conductor: 'bplus-cable', arrow: 'toward-battery' },
  { kind: 'pile', atMs: 8000, dial01: 0.3 },
  { kind: 'pile', atMs: 14_000, dial01: 0 },
];
/** What a batch sent while the first grading runs adds: the pile once more. */
const LATE: InputEvent[] = [
  { kind: 'pile', atMs: 16_000, dial01: 0.4 },
  { kind: 'pile', atMs: 19_000, dial01: 0 },
];
const SUBMIT: SubmitInput = { atMs: 25_000, diagnosis: { faultKind: 'none', verdicts: [], notes: 'healthy' } };

async function attemptWith(events: InputEvent[]): Promise<number> {
  const res = await agent.post('/api/attempts').send({ scenarioId: scenario, mode: 'practice' }).expect(201);
  const id = (res.body as AttemptBootstrap).attempt.id;
  await agent.post(`/api/attempts/${id}/events`).send({ events: numbered(events) }).expect(200);
  return id;
}

/** What grading the stored log from the start gives. */
async function gradedNow(id: number): Promise<AttemptResult> {
  const attempt = await loadAttempt(t.ctx.db, id);
  return gradeRun(gradeJobOf(id, attempt, await loadAttemptRun(t.ctx.db, id), await showAfter(t.ctx.db, attempt.assignmentId), SUBMIT));
}

const storedRow = async (id: number) =>
  (await t.ctx.pool.query<{ status: string; result: AttemptResult | null }>('select status, result from attempts where id = $1', [id])).rows[0]!;

/**
 * The stored result is whole; the submission answers with what the student
 * may see of it, and these attempts are practice, whose result shows nothing
 * of the key (server/grading/result-views.ts).
 */
const seenByStudent = (result: AttemptResult): AttemptResult => studentResult(result, { mode: 'practice', showFeedbackAfter: true, dueAt: null });

/** The submission's answer and its stored result are the grading of the whole stored log, as it is now. */
async function expectGradedNow(id: number, answer: AttemptResult): Promise<void> {
  const whole = await gradedNow(id);
  expect((await storedRow(id)).result).toEqual(whole);
  expect(answer).toEqual(seenByStudent(whole));
  expect(answer.hidden).toEqual({ reason: 'practice', until: null });
}

describe('a submission while it is graded', () => {
  it('holds no database connection and leaves the attempt unlocked', async () => {
    const id = await attemptWith(LOG);
    const seen: { checkedOut: number; lockedBy: string | null }[] = [];
    const other = new pg.Client({ connectionString: t.databaseUrl });
    await other.connect();
    try {
      const result = await submitAttempt(t.ctx.db, id, SUBMIT, {
        grade: async (job) => {
          // Another session can take the attempt's row lock at once: no one holds it.
          await other.query('begin');
          const locked = await other.query<{ id: number }>('select id from attempts where id = $1 for update nowait', [id]);
          await other.query('rollback');
          seen.push({ checkedOut: t.ctx.pool.totalCount - t.ctx.pool.idleCount, lockedBy: locked.rows[0] ? null : 'someone' });
          return gradeRun(job);
        },
      });
      expect(seen).toEqual([{ checkedOut: 0, lockedBy: null }]);
      await expectGradedNow(id, result);
      expect((await storedRow(id)).status).toBe('submitted');
    } finally {
      await other.end();
    }
  });

  it('takes in a batch stored meanwhile: graded again, with it', async () => {
    const id = await attemptWith(LOG);
    const jobs: GradeJob[] = [];
    const result = await submitAttempt(t.ctx.db, id, SUBMIT, {
      grade: async (job) => {
        jobs.push(job);
        // The bench's last batch lands while the first grading runs (through the route, which takes the row lock).
        if (jobs.length === 1) await agent.post(`/api/attempts/${id}/events`).send({ events: numbered(LATE, LOG.length + 1) }).expect(200);
        return gradeRun(job);
      },
    });
    expect(jobs).toHaveLength(2);
    expect(jobs[1]!.events.length - jobs[0]!.events.length).toBe(LATE.length);
    // What is stored is the grading of the whole log, late batch included.
    await expectGradedNow(id, result);
  });

  it('takes in a batch whose transaction held the attempt when the store began, committing only while the store waited', async () => {
    const id = await attemptWith(LOG);
    const batch = new pg.Client({ connectionString: t.databaseUrl });
    const watcher = new pg.Client({ connectionString: t.databaseUrl });
    await Promise.all([batch.connect(), watcher.connect()]);
    const late: InputEvent = { kind: 'pile', atMs: 16_000, dial01: 0.4 };
    const jobs: GradeJob[] = [];
    let committed: Promise<unknown> = Promise.resolve();
    try {
      const result = await submitAttempt(t.ctx.db, id, SUBMIT, {
        grade: async (job) => {
          jobs.push(job);
          if (jobs.length === 1) {
            // A batch being stored, as the events statement does it: the row locked, the event in, not yet committed.
            await batch.query('begin');
            await batch.query('select 1 from attempts where id = $1 for update', [id]);
            await batch.query('insert into attempt_events (attempt_id, seq, sim_time_ms, kind, payload) values ($1, $2, $3, $4, $5)', [id, LOG.length + 1, late.atMs, late.kind, JSON.stringify(late)]);
            // It commits once the store is waiting for the row, after the store's call has begun.
            committed = (async () => {
              for (let tries = 0; ; tries++) {
                const { rows } = await watcher.query<{ n: number }>(
                  "select count(*)::int as n from pg_stat_activity where datname = current_database() and wait_event_type = 'Lock' and query like '%loadline_store_submission%'",
                );
                if (rows[0]!.n > 0) break;
                if (tries > 500) throw new Error('the store never waited for the row');
                await new Promise((r) => setTimeout(r, 10));
              }
              await batch.query('commit');
            })();
          }
          return gradeRun(job);
        },
      });
      await committed;
      // The store saw the batch committed while it waited, so the submission was graded again with it.
      expect(jobs).toHaveLength(2);
      expect(jobs[1]!.events.length - jobs[0]!.events.length).toBe(1);
      await expectGradedNow(id, result);
    } finally {
      await Promise.all([batch.end(), watcher.end()]);
    }
  });

  it('gives up with 409 naming the events when batches keep arriving, and stores nothing', async () => {
    const id = await attemptWith(LOG);
    let next = LOG.length + 1;
    const failure = await submitAttempt(t.ctx.db, id, SUBMIT, {
      grade: async (job) => {
        await agent.post(`/api/attempts/${id}/events`).send({ events: numbered([{ kind: 'pile', atMs: 15_000 + next, dial01: 0.1 }], next) }).expect(200);
        next++;
        return gradeRun(job);
      },
    }).catch((err: unknown) => err);
    expect(failure).toBeInstanceOf(HttpError);
    expect((failure as HttpError).status).toBe(409);
    expect((failure as HttpError).details).toEqual({ field: 'events' });
    expect(next - LOG.length - 1).toBe(3); // graded three times
    expect(await storedRow(id)).toEqual({ status: 'running', result: null });
    // Once the batches stop, the submission goes through.
    await agent.post(`/api/attempts/${id}/submit`).send(SUBMIT).expect(200);
  });

  it('stores one of two submissions sent at once; the other is told it was already submitted', async () => {
    const id = await attemptWith(LOG);
    const answers = await Promise.all([0, 1].map(() => agent.post(`/api/attempts/${id}/submit`).send(SUBMIT)));
    expect(answers.map((a) => a.status).sort()).toEqual([200, 409]);
    const refused = answers.find((a) => a.status === 409)!;
    expect(refused.body.error.message).toBe('This attempt has already been submitted');
    // The answer given is the stored result as the student sees it.
    expect(seenByStudent((await storedRow(id)).result!)).toEqual(answers.find((a) => a.status === 200)!.body);
  });

  it('refuses events once stored: a batch after the submission stores nothing', async () => {
    const id = await attemptWith(LOG);
    await agent.post(`/api/attempts/${id}/submit`).send(SUBMIT).expect(200);
    const late = await agent.post(`/api/attempts/${id}/events`).send({ events: numbered(LATE, LOG.length + 1) }).expect(409);
    expect(late.body.error.message).toBe('This attempt has been submitted; it takes no more events');
    const { rows } = await t.ctx.pool.query<{ n: number }>('select count(*)::int as n from attempt_events where attempt_id = $1', [id]);
    expect(rows[0]!.n).toBe(LOG.length);
  });
});
