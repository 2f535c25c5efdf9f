/**
 * Event batches handed in during one turn of the event loop are stored in one
 * statement (server/attempts/event-batch-writer.ts), each batch with the
 * meaning it has alone: stored once, only on the student's own running
 * attempt, the attempt moved on only when its prediction holds.
 */
import { eq } from 'drizzle-orm';
import fc from 'fast-check';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { CarInput as InputEvent } from '../../shared/api/attempts.ts';
import { attemptEvents, attempts, users } from '../../server/db/schema.ts';
import { createBatchWriter, MAX_GROUP, type BatchToStore } from '../../server/attempts/event-batch-writer.ts';
import { numbered, pileRamp, scenarioId } from './attempts-bench.ts';
import { signIn, startTestApp, type Agent, type TestApp } from './support.ts';

const ADA = 'ada.brightwater@cindervalley.example';
const BO = 'bo.castellane@cindervalley.example';

let t: TestApp;
let ada: Agent;
let bo: Agent;
let adaId: number;
let practice: number;

beforeAll(async () => {
  t = await startTestApp();
  ada = await signIn(t.app, ADA);
  bo = await signIn(t.app, BO);
  const [row] = await t.ctx.db.select({ id: users.id }).from(users).where(eq(users.email, ADA));
  adaId = row!.id;
  practice = await scenarioId(t.ctx, 'healthy-control-corvane-linden');
});
afterAll(async () => {
  await t.close();
});

const start = async (who: Agent = ada): Promise<number> => {
  const res = await who.post('/api/attempts').send({ scenarioId: practice, mode: 'practice' }).expect(201);
  return res.body.attempt.id as number;
};

const script: InputEvent[] = pileRamp(1000, 12, 0.05);

const storedSeqs = async (attemptId: number) =>
  (await t.ctx.db.select({ seq: attemptEvents.seq }).from(attemptEvents).where(eq(attemptEvents.attemptId, attemptId)).orderBy(attemptEvents.seq)).map((r) => r.seq);

const rowOf = async (attemptId: number) =>
  (await t.ctx.db.select({ lastSeq: attempts.lastSeq, simTimeMs: attempts.simTimeMs, currentTest: attempts.currentTest }).from(attempts).where(eq(attempts.id, attemptId)))[0];

/** Events from..to (1-based seqs) of the script, with the prediction that they follow on from from-1. */
const batchOf = (attemptId: number, from: number, to: number, predict = true, userId = adaId): BatchToStore => {
  const events = numbered(script, 1).slice(from - 1, to);
  return {
    attemptId,
    userId,
    events,
    predicted: predict ? { fromSeq: from - 1, lastSeq: to, currentTest: 'battery-load', simTimeMs: Math.max(...events.map((e) => e.event.atMs)) } : null,
  };
};

describe('the event batch writer', () => {
  it('stores the batches of several attempts handed in at once in one statement, each moved on as it would be alone', async () => {
    const ids = await Promise.all([1, 2, 3, 4, 5, 6].map(() => start()));
    const writer = createBatchWriter(t.ctx.pool);
    const results = await Promise.all(ids.map((id) => writer.store(batchOf(id, 1, 4))));
    expect(writer.stats).toEqual({ statements: 1, batches: 6, retriedAlone: 0 });
    for (const [i, id] of ids.entries()) {
      expect(results[i]).toEqual({ status: 'running', lastSeq: 0, simTimeMs: 0, inserted: expect.arrayContaining([1, 2, 3, 4]), earlier: [], movedOn: true, backdated: null });
      expect(results[i]!.inserted).toHaveLength(4);
      expect(await storedSeqs(id)).toEqual([1, 2, 3, 4]);
      expect(await rowOf(id)).toEqual({ lastSeq: 4, simTimeMs: script[3]!.atMs, currentTest: 'battery-load' });
    }
  });

  it('sends a lone batch at the end of the turn it arrived in, and a batch of a later turn in a statement of its own', async () => {
    const id = await start();
    const writer = createBatchWriter(t.ctx.pool);
    await writer.store(batchOf(id, 1, 2));
    await writer.store(batchOf(id, 3, 4));
    expect(writer.stats.statements).toBe(2);
    expect(await rowOf(id)).toMatchObject({ lastSeq: 4 });
  });

  it('puts a second batch of the same attempt in a statement of its own, each batch storing its own events once', async () => {
    const id = await start();
    const writer = createBatchWriter(t.ctx.pool);
    const [first, second] = await Promise.all([writer.store(batchOf(id, 1, 3)), writer.store(batchOf(id, 4, 6, false))]);
    expect(writer.stats).toMatchObject({ statements: 2, batches: 2 });
    // The two statements run side by side, as two requests would: whichever locked the row first, each stored its own events.
    expect(first!.inserted.sort((a, b) => a - b)).toEqual([1, 2, 3]);
    expect(second!.inserted.sort((a, b) => a - b)).toEqual([4, 5, 6]);
    expect(await storedSeqs(id)).toEqual([1, 2, 3, 4, 5, 6]);
    expect((await rowOf(id))!.lastSeq).toBeLessThanOrEqual(3);
  });

  it(`keeps a statement to ${MAX_GROUP} batches`, async () => {
    const ids = await Promise.all(Array.from({ length: MAX_GROUP + 3 }, () => start()));
    const writer = createBatchWriter(t.ctx.pool);
    const results = await Promise.all(ids.map((id) => writer.store(batchOf(id, 1, 1))));
    expect(writer.stats).toEqual({ statements: 2, batches: MAX_GROUP + 3, retriedAlone: 0 });
    expect(results.every((r) => r?.movedOn === true)).toBe(true);
  });

  it('answers null for an attempt that is not the student’s, stores nothing of it, and stores the rest of the group', async () => {
    const mine = await start();
    const bos = await start(bo);
    const writer = createBatchWriter(t.ctx.pool);
    const [a, b, missing] = await Promise.all([writer.store(batchOf(mine, 1, 2)), writer.store(batchOf(bos, 1, 2)), writer.store(batchOf(2_000_000_000, 1, 2))]);
    expect(writer.stats.statements).toBe(1);
    expect(a).toMatchObject({ movedOn: true });
    expect(b).toBeNull();
    expect(missing).toBeNull();
    expect(await storedSeqs(mine)).toEqual([1, 2]);
    expect(await storedSeqs(bos)).toEqual([]);
  });

  it('stores nothing on a submitted attempt and says so, beside a running one', async () => {
    const running = await start();
    const done = await start();
    await t.ctx.db.update(attempts).set({ status: 'submitted' }).where(eq(attempts.id, done));
    const writer = createBatchWriter(t.ctx.pool);
    const [a, b] = await Promise.all([writer.store(batchOf(running, 1, 2)), writer.store(batchOf(done, 1, 2))]);
    expect(a).toMatchObject({ status: 'running', movedOn: true });
    expect(b).toEqual({ status: 'submitted', lastSeq: 0, simTimeMs: 0, inserted: [], earlier: [], movedOn: false, backdated: null });
    expect(await storedSeqs(done)).toEqual([]);
  });

  it('refuses a batch whose sim time runs back before the stored log, naming its first such event, and stores nothing of it', async () => {
    const [after, gap, fine] = await Promise.all([start(), start(), start()]);
    const writer = createBatchWriter(t.ctx.pool);
    await Promise.all([writer.store(batchOf(after, 1, 4)), writer.store(batchOf(gap, 1, 2)), writer.store(batchOf(gap, 5, 6, false))]);
    const at = (seq: number) => script[seq - 1]!.atMs;
    // Event 5 set before stored event 4; event 3 filling the gap but set after stored event 5.
    const early: BatchToStore = { attemptId: after, userId: adaId, events: [{ seq: 5, event: { ...script[4]!, atMs: at(4) - 1 } }, { seq: 6, event: script[5]! }], predicted: null };
    const late: BatchToStore = { attemptId: gap, userId: adaId, events: [{ seq: 3, event: { ...script[2]!, atMs: at(5) + 1 } }], predicted: null };
    const [a, b, c] = await Promise.all([writer.store(early), writer.store(late), writer.store(batchOf(fine, 1, 2))]);
    expect(a).toMatchObject({ status: 'running', inserted: [], movedOn: false, backdated: { seq: 5, atMs: at(4) - 1, storedSeq: 4, storedAtMs: at(4) } });
    expect(b).toMatchObject({ status: 'running', inserted: [], movedOn: false, backdated: { seq: 3, atMs: at(5) + 1, storedSeq: 5, storedAtMs: at(5) } });
    // The refusal is the batch's own: the batch beside it in the statement is stored.
    expect(c).toMatchObject({ movedOn: true, backdated: null });
    expect(await storedSeqs(after)).toEqual([1, 2, 3, 4]);
    expect(await storedSeqs(gap)).toEqual([1, 2, 5, 6]);
    expect(await storedSeqs(fine)).toEqual([1, 2]);
  });

  it('fails only the batch holding a value PostgreSQL cannot store, after trying the group again one by one', async () => {
    const [good1, bad, good2] = await Promise.all([start(), start(), start()]);
    const writer = createBatchWriter(t.ctx.pool);
    // A seq past PostgreSQL's integer: a data exception (22003) for the whole statement.
    const outOfRange: BatchToStore = { attemptId: bad, userId: adaId, events: [{ seq: 2 ** 31, event: script[0]! }], predicted: null };
    const settled = await Promise.allSettled([writer.store(batchOf(good1, 1, 3)), writer.store(outOfRange), writer.store(batchOf(good2, 1, 3))]);
    expect(settled.map((s) => s.status)).toEqual(['fulfilled', 'rejected', 'fulfilled']);
    expect(((settled[1] as PromiseRejectedResult).reason as { code?: string }).code).toBe('22003');
    expect(writer.stats).toEqual({ statements: 4, batches: 6, retriedAlone: 1 });
    expect(await storedSeqs(good1)).toEqual([1, 2, 3]);
    expect(await storedSeqs(good2)).toEqual([1, 2, 3]);
    expect(await storedSeqs(bad)).toEqual([]);
  });

  it('fails every batch of the group when the database is away, and writes nothing', async () => {
    const ids = await Promise.all([start(), start()]);
    const { Pool } = (await import('pg')).default;
    // A pool on a port where nothing listens: the connection is refused.
    const away = new Pool({ host: '127.0.0.1', port: 9, database: 'none', user: 'none', connectionTimeoutMillis: 1000 });
    const writer = createBatchWriter(away);
    const settled = await Promise.allSettled(ids.map((id) => writer.store(batchOf(id, 1, 2))));
    await away.end();
    expect(settled.every((s) => s.status === 'rejected')).toBe(true);
    expect(writer.stats).toEqual({ statements: 1, batches: 2, retriedAlone: 0 });
    for (const id of ids) expect(await storedSeqs(id)).toEqual([]);
  });

  it('stores every event of any mix of batches exactly once, however they are grouped (property)', async () => {
    const ids = await Promise.all([1, 2, 3].map(() => start()));
    const RUNS = 25;
    let round = 0;
    await fc.assert(
      fc.asyncProperty(
        // Batches as (attempt, first seq, length), handed in over a few turns.
        fc.array(fc.record({ attempt: fc.integer({ min: 0, max: 2 }), from: fc.integer({ min: 1, max: 10 }), length: fc.integer({ min: 1, max: 3 }), turn: fc.integer({ min: 0, max: 2 }), predict: fc.boolean() }), { minLength: 1, maxLength: 12 }),
        async (plan) => {
          round++;
          // Fresh attempts for each run: the property is about one run's batches.
          const run = await Promise.all(ids.map(() => start()));
          const writer = createBatchWriter(t.ctx.pool);
          for (let turn = 0; turn <= 2; turn++) {
            await Promise.all(plan.filter((p) => p.turn === turn).map((p) => writer.store(batchOf(run[p.attempt]!, p.from, p.from + p.length - 1, p.predict))));
          }
          const expected = run.map((_, i) => [...new Set(plan.filter((p) => p.attempt === i).flatMap((p) => Array.from({ length: p.length }, (_, k) => p.from + k)))].sort((a, b) => a - b));
          for (const [i, id] of run.entries()) {
            expect(await storedSeqs(id)).toEqual(expected[i]);
            // Moved on only as far as a gap-free prefix of what is stored.
            const { lastSeq } = (await rowOf(id))!;
            expect(expected[i]!.slice(0, lastSeq)).toEqual(Array.from({ length: lastSeq }, (_, k) => k + 1));
          }
        },
      ),
      { numRuns: RUNS },
    );
    expect(round).toBe(RUNS);
  });
});
