/**
 * The event log of a running attempt: the model's inputs and the readings
 * the student records, each stored as it comes. A batch is stored by one
 * statement that locks the attempt's row; the unique (attempt, seq) index and
 * `on conflict do nothing` store each event once however often, and however
 * concurrently, a batch is sent. Gaps are stored as they come: `lastSeq` is
 * the highest seq up to which every event from 1 is stored, so the bench
 * knows to resend everything after it, and submission waits for the gaps to
 * fill. Sim times never run back along the log: a batch with an event
 * earlier than one before it is refused whole with a 409 naming the event. A
 * change of the car is taken only as the log of an instructor's injection
 * delivered to this bench, with the injection's own operations.
 */
import type pg from 'pg';
import type { DiagnosticTest } from '../../sim/faults.ts';
import { sameEffect } from '../../sim/car-changes.ts';
import { modelEvents, postEventsSchema, READING_LAG_MS, type LogEvent, type PostEventsResponse } from '../../shared/api/attempts.ts';
import type { SessionUser } from '../../shared/api/auth.ts';
import { pendingActionSchema, type PendingAction } from '../../shared/api/live.ts';
import type { Db } from '../db/client.ts';
import { scopedCache } from '../db/scoped-cache.ts';
import { badRequest, conflict, forbidden, notFound } from '../http/errors.ts';
import { parseValue } from '../http/validate.ts';
import { loadDefinition } from '../library/definitions.ts';
import { batchWriterOf } from './event-batch-writer.ts';
import { sendAhead } from '../grading/pool.ts';
import { injectionChange } from '../live/injection-authority.ts';
import { carOf, rowToLogEvent } from './rerun-inputs.ts';
import { carryOnSetup, initialSetup, setupAfter, type Setup } from './rerun-cursor.ts';
import { testOfSetup } from '../live/board.ts';

/** The instructor's injections of an attempt that the server has delivered to its bench. */
async function deliveredActions(pool: pg.Pool, attemptId: number): Promise<PendingAction[]> {
  const { rows } = await pool.query<{ action: unknown }>({
    name: 'events-delivered-actions',
    text: 'select action from pending_injections where attempt_id = $1 and delivered_at is not null',
    values: [attemptId],
  });
  return rows.flatMap((r) => {
    const parsed = pendingActionSchema.safeParse(r.action);
    return parsed.success ? [parsed.data] : [];
  });
}

/**
 * Whether a change from the bench logs one of the instructor's injections
 * delivered to it: the same id, and for an injection the same operations and
 * pattern (its onset is judged later, against the server's delivery).
 */
export function matchesInjection(event: LogEvent, actions: readonly PendingAction[]): boolean {
  if (event.kind === 'change-apply') {
    const c = event.change;
    return actions.some((a) => {
      if (a.type !== 'inject' || a.faultId !== c.id) return false;
      const expected = injectionChange(a, event.atMs);
      return sameEffect(expected, c);
    });
  }
  if (event.kind === 'change-clear') return actions.some((a) => a.type === 'clear' && a.faultId === event.changeId);
  return true;
}

/**
 * The set-up after events 1..lastSeq of each attempt this process has
 * stored events for. An entry is used only when its lastSeq is the one in
 * the locked row, so a batch stored by another process just costs a rebuild
 * from the database.
 */
const setups = scopedCache<number, { lastSeq: number; setup: Setup }>(10_000);

/** Forgets the cached set-ups of a database (tests use it to force the rebuild from the stored log). */
export function forgetSetups(db: Db): void {
  setups.of(db)?.clear();
}

/**
 * The set-up after events 1..newLastSeq, carried on from the cached one when
 * the new events are all at or after its latest time, else rebuilt from the
 * stored log. `fresh` holds this batch's stored events by seq.
 */
async function setupThrough(
  ctx: { db: Db; pool: pg.Pool },
  attemptId: number,
  oldLastSeq: number,
  newLastSeq: number,
  fresh: ReadonlyMap<number, LogEvent>,
): Promise<Setup> {
  const cached = oldLastSeq === 0 ? { lastSeq: 0, setup: initialSetup() } : setups.of(ctx.db)?.get(attemptId);
  if (cached && cached.lastSeq === oldLastSeq) {
    const added: LogEvent[] = [];
    for (let seq = oldLastSeq + 1; seq <= newLastSeq; seq++) {
      const e = fresh.get(seq);
      if (!e) break;
      added.push(e);
    }
    const carried = added.length === newLastSeq - oldLastSeq ? carryOnSetup(cached.setup, added) : null;
    if (carried) return carried;
  }
  const { rows } = await ctx.pool.query<{ kind: string; simTimeMs: number; payload: unknown }>({
    name: 'events-prefix',
    text: 'select kind, sim_time_ms as "simTimeMs", payload from attempt_events where attempt_id = $1 and seq <= $2 order by seq',
    values: [attemptId, newLastSeq],
  });
  return setupAfter(rows.flatMap((r) => rowToLogEvent(r) ?? []));
}

/** What never changes of an attempt: its owner, scenario version and seed. */
export interface AttemptOwner {
  userId: number;
  scenarioVersionId: number;
  seed: number;
}

/** The attempt's owner, scenario version and seed, kept per database. */
const owners = scopedCache<number, AttemptOwner>(10_000);

/** The attempt's owner, scenario version and seed, from this process's memory after the first read (404 when there is no such attempt). */
async function attemptOwner(ctx: { db: Db; pool: pg.Pool }, attemptId: number): Promise<AttemptOwner> {
  const hit = owners.of(ctx.db)?.get(attemptId);
  if (hit) return hit;
  const { rows } = await ctx.pool.query<AttemptOwner>({
    name: 'events-attempt-owner-seed',
    text: 'select user_id as "userId", scenario_version_id as "scenarioVersionId", seed from attempts where id = $1',
    values: [attemptId],
  });
  const row = rows[0];
  if (!row) throw notFound('No such attempt');
  owners.of(ctx.db)?.set(attemptId, row);
  return row;
}

/** The signed-in student's own attempt (its owner, scenario version and seed), else 404 or 403. */
export async function requireOwnAttempt(ctx: { db: Db; pool: pg.Pool }, user: SessionUser, attemptId: number): Promise<AttemptOwner> {
  const owner = await attemptOwner(ctx, attemptId);
  if (owner.userId !== user.id) throw forbidden('This attempt is not yours');
  return owner;
}

/**
 * Where a batch leaves the attempt if it is what usually comes: the next
 * events after the lastSeq this process last stored, all new, and none
 * earlier in sim time than the set-up so far. Null when the batch is not
 * that, or this process holds no set-up for the attempt (then the slow path
 * below works it out from what the database says).
 */
function predictMoveOn(
  cached: { lastSeq: number; setup: Setup } | undefined,
  events: readonly { seq: number; event: LogEvent }[],
): { fromSeq: number; lastSeq: number; setup: Setup; simTimeMs: number } | null {
  const base = cached ?? (events[0]?.seq === 1 ? { lastSeq: 0, setup: initialSetup() } : undefined);
  if (!base || events.length === 0) return null;
  if (events.some((e, i) => e.seq !== base.lastSeq + i + 1)) return null;
  const setup = carryOnSetup(base.setup, events.map((e) => e.event));
  if (!setup) return null;
  return { fromSeq: base.lastSeq, lastSeq: base.lastSeq + events.length, setup, simTimeMs: setup.maxAtMs };
}

/**
 * Sends the model's events of seqs fromSeq+1..toSeq of the stored log to the
 * grading worker, which runs the attempt ahead so that its submission re-runs
 * only the tail (run-ahead.ts checks them against the submission's own run).
 */
function runAhead(attemptId: number, owner: AttemptOwner, car: ReturnType<typeof carOf>, fromSeq: number, toSeq: number, events: readonly LogEvent[]): void {
  sendAhead({ attemptId, seed: owner.seed, fromSeq, toSeq, events: modelEvents(events), ...(fromSeq === 0 ? { start: { car } } : {}) });
}

/** The events of a batch, by seq, must not run back in sim time among themselves: else a 409 naming the first that does. */
function assertInTimeOrder(events: readonly { seq: number; event: LogEvent }[]): void {
  const bySeq = events.map((e, i) => ({ ...e, i })).sort((a, b) => a.seq - b.seq);
  for (let k = 1; k < bySeq.length; k++) {
    const prev = bySeq[k - 1]!;
    const e = bySeq[k]!;
    if (e.event.atMs < prev.event.atMs) {
      throw conflict(
        `events.${e.i}.event.atMs: event ${e.seq} (${e.event.kind}) at ${e.event.atMs} ms runs back before event ${prev.seq} at ${prev.event.atMs} ms; the log's sim times never go back`,
        `events.${e.i}.event.atMs`,
      );
    }
  }
}

/**
 * Stores a batch for the signed-in student's own attempt. This is the
 * busiest write of the product (a batch a second from every bench), so it is
 * usually one statement, shared with the other batches of the same turn of the
 * event loop (event-batch-writer.ts), with no open transaction:
 *
 * 1. The statement locks the attempt's row, inserts the batch only if the
 *    attempt is this student's and still running (so a batch racing a
 *    submission stores nothing), and returns the seqs after lastSeq. When
 *    the batch is the one predicted (predictMoveOn) and the row and the log
 *    bear the prediction out (the lastSeq it started from, every event new,
 *    nothing stored after it), the same statement moves lastSeq, the set-up
 *    and the sim time on.
 * 2. Otherwise one update moves them on from what the statement returned,
 *    and only forwards (`greatest`), so two batches finishing out of order
 *    never move them back.
 *
 * Were the process to stop between the two, the events are stored and the
 * next batch (or the retry of this one) finds them after lastSeq and moves
 * it on; submission checks the stored log itself for gaps.
 */
export async function postEvents(ctx: { db: Db; pool: pg.Pool }, user: SessionUser, attemptId: number, body: unknown): Promise<PostEventsResponse> {
  const owner = await requireOwnAttempt(ctx, user, attemptId);
  const input = parseValue(postEventsSchema, body, 'body');

  const def = await loadDefinition(ctx.db, owner.scenarioVersionId);
  const car = carOf(def);
  const accessoryIds = new Set(def.vehicle.params.loads.accessories.map((a) => a.id));
  const hasChanges = input.events.some((e) => e.event.kind === 'change-apply' || e.event.kind === 'change-clear');
  const actions = hasChanges ? await deliveredActions(ctx.pool, attemptId) : [];
  input.events.forEach(({ event }, i) => {
    if (event.kind === 'accessory' && !accessoryIds.has(event.id)) {
      throw badRequest(`events.${i}.event.id: this car has no accessory "${event.id}"`, { field: `events.${i}.event.id` });
    }
    if (!matchesInjection(event, actions)) {
      throw badRequest(`events.${i}.event: a change of the car is taken only as the log of an instructor's injection delivered to this bench`, { field: `events.${i}.event` });
    }
    if (event.kind === 'reading' && (event.reading.atMs > event.atMs || event.reading.atMs < event.atMs - READING_LAG_MS)) {
      throw badRequest(`events.${i}.event.reading.atMs: a reading is logged within ${READING_LAG_MS} ms after the moment it shows, not at ${event.atMs} ms for ${event.reading.atMs} ms`, {
        field: `events.${i}.event.reading.atMs`,
      });
    }
  });
  assertInTimeOrder(input.events);

  const predicted = predictMoveOn(setups.of(ctx.db)?.get(attemptId), input.events);
  const currentTestPredicted: DiagnosticTest | null = predicted ? testOfSetup(predicted.setup.controls, { engine: predicted.setup.engineGuess }) : null;
  // Stored with the other batches of this turn of the event loop, in one statement (event-batch-writer.ts).
  const attempt = await batchWriterOf(ctx.pool).store({
    attemptId,
    userId: user.id,
    events: input.events,
    predicted: predicted ? { fromSeq: predicted.fromSeq, lastSeq: predicted.lastSeq, currentTest: currentTestPredicted, simTimeMs: predicted.simTimeMs } : null,
  });
  if (!attempt) throw notFound('No such attempt');
  if (attempt.status === 'submitted') throw conflict('This attempt has been submitted; it takes no more events');
  if (attempt.backdated) {
    const b = attempt.backdated;
    const i = input.events.findIndex((e) => e.seq === b.seq);
    const field = `events.${i}.event.atMs`;
    const against = b.storedSeq < b.seq ? `runs back before event ${b.storedSeq} at ${b.storedAtMs} ms` : `comes after event ${b.storedSeq} at ${b.storedAtMs} ms, later in the log`;
    throw conflict(`${field}: event ${b.seq} at ${b.atMs} ms ${against}, already stored; the log's sim times never go back, so nothing of this batch was stored`, field);
  }
  if (predicted && attempt.movedOn) {
    setups.of(ctx.db)?.set(attemptId, { lastSeq: predicted.lastSeq, setup: predicted.setup });
    runAhead(attemptId, owner, car, predicted.fromSeq, predicted.lastSeq, input.events.map((e) => e.event));
    return { lastSeq: predicted.lastSeq, stored: input.events.length };
  }

  const insertedSeqs = new Set(attempt.inserted);
  let lastSeq = attempt.lastSeq;
  for (const seq of [...attempt.inserted, ...attempt.earlier].sort((a, b) => a - b)) {
    if (seq === lastSeq + 1) lastSeq = seq;
    else if (seq > lastSeq + 1) break;
  }
  const moves = lastSeq !== attempt.lastSeq;
  const fresh = new Map(input.events.filter((e) => insertedSeqs.has(e.seq)).map((e) => [e.seq, e.event] as const));
  const simTimeMs = [...fresh.values()].reduce((m, e) => Math.max(m, e.atMs), attempt.simTimeMs);
  if (moves || simTimeMs > attempt.simTimeMs) {
    const setup = moves ? await setupThrough(ctx, attemptId, attempt.lastSeq, lastSeq, fresh) : null;
    const currentTest: DiagnosticTest | null = setup ? testOfSetup(setup.controls, { engine: setup.engineGuess }) : null;
    // SET reads the row as it was, so the set-up changes only with a lastSeq that moves forward; the sim time always may.
    const moved = await ctx.pool.query<{ lastSeq: number }>({
      name: 'events-move-on',
      text: `update attempts
                set last_seq = greatest(last_seq, $2),
                    current_test = case when last_seq < $2 then $3 else current_test end,
                    sim_time_ms = greatest(sim_time_ms, $4)
              where id = $1
          returning last_seq as "lastSeq"`,
      values: [attemptId, lastSeq, currentTest, simTimeMs],
    });
    // The same lastSeq, whoever wrote it, means the same stored prefix and so the same set-up.
    if (setup && moved.rows[0]?.lastSeq === lastSeq) {
      setups.of(ctx.db)?.set(attemptId, { lastSeq, setup });
      const added: LogEvent[] = [];
      for (let seq = attempt.lastSeq + 1; seq <= lastSeq && fresh.has(seq); seq++) added.push(fresh.get(seq)!);
      if (added.length === lastSeq - attempt.lastSeq) runAhead(attemptId, owner, car, attempt.lastSeq, lastSeq, added);
    }
  }
  return { lastSeq, stored: insertedSeqs.size };
}
