/**
 * The event log of a running attempt. A batch is stored by one statement
 * that locks the attempt's row; the unique (attempt, seq) index and `on
 * conflict do nothing` store each event once however often, and however
 * concurrently, a batch is sent. Gaps are stored as they come:
 * `lastSeq` is the highest seq up to which every event from 1 is stored, so
 * the bench knows to resend everything after it, and submission waits for
 * the gaps to fill. Fault events are taken only as the log of an
 * instructor's pending injection.
 */
import type pg from 'pg';
import type { DiagnosticTest } from '../../sim/faults.ts';
import type { Controls, InputEvent } from '../../sim/inputs.ts';
import { applyInput, initialControls } from '../../sim/inputs.ts';
import { orderEvents } from '../../sim/replay.ts';
import { postEventsSchema, type PostEventsResponse } from '../../shared/api/attempts.ts';
import type { SessionUser } from '../../shared/api/auth.ts';
import { pendingActionSchema, type PendingAction } from '../../shared/api/live.ts';
import type { ScenarioDefinition } from '../../shared/scenario.ts';
import type { Db } from '../db/client.ts';
import { scopedCache } from '../db/scoped-cache.ts';
import { badRequest, conflict, forbidden, notFound } from '../http/errors.ts';
import { parseValue } from '../http/validate.ts';
import { loadDefinition } from './definitions.ts';
import { batchWriterOf } from './event-batch-writer.ts';
import { sendAhead } from './grading-pool.ts';
import { rowToInput, scenarioFaultEvents } from './live-attempt-run.ts';
import { testOfSetup } from './live-board.ts';

async function pendingActions(pool: pg.Pool, attemptId: number): Promise<PendingAction[]> {
  const { rows } = await pool.query<{ action: unknown }>({ name: 'events-pending-actions', text: 'select action from pending_injections where attempt_id = $1', values: [attemptId] });
  return rows.flatMap((r) => {
    const parsed = pendingActionSchema.safeParse(r.action);
    return parsed.success ? [parsed.data] : [];
  });
}

/** Whether a fault event from the bench logs one of the instructor's injections for this attempt. */
export function matchesInjection(event: InputEvent, actions: readonly PendingAction[]): boolean {
  if (event.kind === 'fault-inject') {
    return actions.some(
      (a) => a.type === 'inject' && a.faultId === event.fault.id && a.kind === event.fault.kind && Math.abs(a.severity01 - event.fault.severity01) < 1e-9,
    );
  }
  if (event.kind === 'fault-clear') return actions.some((a) => a.type === 'clear' && a.faultId === event.faultId);
  return true;
}

/** The bench set-up after a run of events: what names the test being set up for the live board's list. */
export interface Setup {
  controls: Controls;
  /** Running after a start until the key goes off. */
  engineGuess: 'off' | 'cranking' | 'running';
  /** The latest sim time among the events folded in. */
  maxAtMs: number;
}

export const initialSetup = (): Setup => ({ controls: initialControls(), engineGuess: 'off', maxAtMs: 0 });

/** The set-up after `events` too, taken in time order (equal times in the order given). */
export function foldSetup(from: Setup, events: readonly InputEvent[]): Setup {
  let { controls, engineGuess, maxAtMs } = from;
  for (const e of orderEvents(events)) {
    controls = applyInput(controls, e, 0);
    if (e.kind === 'key') engineGuess = e.position === 'start' ? 'cranking' : e.position === 'off' ? 'off' : engineGuess === 'cranking' ? 'running' : engineGuess;
    maxAtMs = Math.max(maxAtMs, e.atMs);
  }
  return { controls, engineGuess, maxAtMs };
}

/**
 * The set-up after the whole log: enough to name the test being set up for
 * the live board's list, which re-runs the model for anything finer.
 */
export function setupAfter(events: readonly InputEvent[]): Setup {
  return foldSetup(initialSetup(), events);
}

/** The set-up after `base` and then `added`, when it can be carried on: none of `added` is earlier in sim time than the events folded into `base`. */
function carryOn(base: Setup, added: readonly InputEvent[]): Setup | null {
  return added.every((e) => e.atMs >= base.maxAtMs) ? foldSetup(base, added) : null;
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
  fresh: ReadonlyMap<number, InputEvent>,
): Promise<Setup> {
  const cached = oldLastSeq === 0 ? { lastSeq: 0, setup: initialSetup() } : setups.of(ctx.db)?.get(attemptId);
  if (cached && cached.lastSeq === oldLastSeq) {
    const added: InputEvent[] = [];
    for (let seq = oldLastSeq + 1; seq <= newLastSeq; seq++) {
      const e = fresh.get(seq);
      if (!e) break;
      added.push(e);
    }
    const carried = added.length === newLastSeq - oldLastSeq ? carryOn(cached.setup, added) : null;
    if (carried) return carried;
  }
  const { rows } = await ctx.pool.query<{ kind: string; simTimeMs: number; payload: unknown }>({
    name: 'events-prefix',
    text: 'select kind, sim_time_ms as "simTimeMs", payload from attempt_events where attempt_id = $1 and seq <= $2 order by seq',
    values: [attemptId, newLastSeq],
  });
  return setupAfter(rows.flatMap((r) => rowToInput(r) ?? []));
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
  events: readonly { seq: number; event: InputEvent }[],
): { fromSeq: number; lastSeq: number; setup: Setup; simTimeMs: number } | null {
  const base = cached ?? (events[0]?.seq === 1 ? { lastSeq: 0, setup: initialSetup() } : undefined);
  if (!base || events.length === 0) return null;
  if (events.some((e, i) => e.seq !== base.lastSeq + i + 1)) return null;
  const setup = carryOn(base.setup, events.map((e) => e.event));
  if (!setup) return null;
  return { fromSeq: base.lastSeq, lastSeq: base.lastSeq + events.length, setup, simTimeMs: setup.maxAtMs };
}

/**
 * Sends events fromSeq+1.. of the stored log to the grading worker, which
 * runs the attempt ahead so that its submission re-runs only the tail
 * (run-ahead.ts checks them against the submission's own log).
 */
function runAhead(attemptId: number, owner: AttemptOwner, def: ScenarioDefinition, fromSeq: number, events: InputEvent[]): void {
  sendAhead({
    attemptId,
    seed: owner.seed,
    fromSeq,
    events,
    ...(fromSeq === 0 ? { start: { params: def.vehicle.params, scenarioEvents: scenarioFaultEvents(def) } } : {}),
  });
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
  const accessoryIds = new Set(def.vehicle.params.loads.accessories.map((a) => a.id));
  const hasFaultEvents = input.events.some((e) => e.event.kind === 'fault-inject' || e.event.kind === 'fault-clear');
  const actions = hasFaultEvents ? await pendingActions(ctx.pool, attemptId) : [];
  input.events.forEach(({ event }, i) => {
    if (event.kind === 'accessory' && !accessoryIds.has(event.id)) {
      throw badRequest(`events.${i}.event.id: this car has no accessory "${event.id}"`, { field: `events.${i}.event.id` });
    }
    if (!matchesInjection(event, actions)) {
      throw badRequest(`events.${i}.event: fault events are taken only as the log of an instructor's injection`, { field: `events.${i}.event` });
    }
  });

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
  if (predicted && attempt.movedOn) {
    setups.of(ctx.db)?.set(attemptId, { lastSeq: predicted.lastSeq, setup: predicted.setup });
    runAhead(attemptId, owner, def, predicted.fromSeq, input.events.map((e) => e.event));
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
      const added: InputEvent[] = [];
      for (let seq = attempt.lastSeq + 1; seq <= lastSeq && fresh.has(seq); seq++) added.push(fresh.get(seq)!);
      if (added.length === lastSeq - attempt.lastSeq) runAhead(attemptId, owner, def, attempt.lastSeq, added);
    }
  }
  return { lastSeq, stored: insertedSeqs.size };
}
