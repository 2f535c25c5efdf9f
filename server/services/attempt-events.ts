/**
 * The event log of a running attempt. A batch is stored in one transaction
 * with the attempt's row locked, so concurrent posts of the same batch store
 * each event once (the unique (attempt, seq) index and `on conflict do
 * nothing` make a retried batch a no-op). Gaps are stored as they come:
 * `lastSeq` is the highest seq up to which every event from 1 is stored, so
 * the bench knows to resend everything after it, and submission waits for
 * the gaps to fill. Fault events are taken only as the log of an
 * instructor's pending injection.
 */
import { and, asc, eq, gt } from 'drizzle-orm';
import type { DiagnosticTest } from '../../sim/faults.ts';
import type { Controls, InputEvent } from '../../sim/inputs.ts';
import { applyInput, initialControls } from '../../sim/inputs.ts';
import { orderEvents } from '../../sim/replay.ts';
import { postEventsSchema, type PostEventsResponse } from '../../shared/api/attempts.ts';
import type { SessionUser } from '../../shared/api/auth.ts';
import { pendingActionSchema, type PendingAction } from '../../shared/api/live.ts';
import type { Db, DbOrTx } from '../db/client.ts';
import { attemptEvents, attempts, pendingInjections } from '../db/schema.ts';
import { scopedCache } from '../db/scoped-cache.ts';
import { badRequest, conflict, forbidden } from '../http/errors.ts';
import { parseValue } from '../http/validate.ts';
import { loadAttempt, storedEvents } from './attempt-store.ts';
import { loadDefinition } from './definitions.ts';
import { testOfSetup } from './live-board.ts';

async function pendingActions(db: DbOrTx, attemptId: number): Promise<PendingAction[]> {
  const rows = await db.select({ action: pendingInjections.action }).from(pendingInjections).where(eq(pendingInjections.attemptId, attemptId));
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
async function setupThrough(tx: DbOrTx, attemptId: number, oldLastSeq: number, newLastSeq: number, fresh: ReadonlyMap<number, InputEvent>): Promise<Setup> {
  const cached = oldLastSeq === 0 ? { lastSeq: 0, setup: initialSetup() } : setups.of(tx)?.get(attemptId);
  if (cached && cached.lastSeq === oldLastSeq) {
    const added: InputEvent[] = [];
    for (let seq = oldLastSeq + 1; seq <= newLastSeq; seq++) {
      const e = fresh.get(seq);
      if (!e) break;
      added.push(e);
    }
    if (added.length === newLastSeq - oldLastSeq && added.every((e) => e.atMs >= cached.setup.maxAtMs)) {
      return foldSetup(cached.setup, added);
    }
  }
  const prefix = (await storedEvents(tx, attemptId)).filter((e) => e.seq <= newLastSeq).map((e) => e.event);
  return setupAfter(prefix);
}

/**
 * Stores a batch for the signed-in student's own attempt. The ownership
 * check reads the row it locks, so a batch costs one lock, one insert, one
 * look at the seqs after lastSeq and one update.
 */
export async function postEvents(db: Db, user: SessionUser, attemptId: number, body: unknown): Promise<PostEventsResponse> {
  const { response, remember } = await db.transaction(async (tx) => {
    let remember: { lastSeq: number; setup: Setup } | null = null;
    const attempt = await loadAttempt(tx, attemptId, { lock: true });
    if (attempt.userId !== user.id) throw forbidden('This attempt is not yours');
    const input = parseValue(postEventsSchema, body, 'body');
    if (attempt.status === 'submitted') throw conflict('This attempt has been submitted; it takes no more events');

    const def = await loadDefinition(tx, attempt.scenarioVersionId);
    const accessoryIds = new Set(def.vehicle.params.loads.accessories.map((a) => a.id));
    const hasFaultEvents = input.events.some((e) => e.event.kind === 'fault-inject' || e.event.kind === 'fault-clear');
    const actions = hasFaultEvents ? await pendingActions(tx, attemptId) : [];
    input.events.forEach(({ event }, i) => {
      if (event.kind === 'accessory' && !accessoryIds.has(event.id)) {
        throw badRequest(`events.${i}.event.id: this car has no accessory "${event.id}"`, { field: `events.${i}.event.id` });
      }
      if (!matchesInjection(event, actions)) {
        throw badRequest(`events.${i}.event: fault events are taken only as the log of an instructor's injection`, { field: `events.${i}.event` });
      }
    });

    const inserted = await tx
      .insert(attemptEvents)
      .values(
        input.events.map(({ seq, event }) => ({ attemptId, seq, simTimeMs: event.atMs, kind: event.kind, payload: event })),
      )
      .onConflictDoNothing({ target: [attemptEvents.attemptId, attemptEvents.seq] })
      .returning({ seq: attemptEvents.seq });

    let lastSeq = attempt.lastSeq;
    const later = await tx
      .select({ seq: attemptEvents.seq })
      .from(attemptEvents)
      .where(and(eq(attemptEvents.attemptId, attemptId), gt(attemptEvents.seq, lastSeq)))
      .orderBy(asc(attemptEvents.seq));
    for (const { seq } of later) {
      if (seq !== lastSeq + 1) break;
      lastSeq = seq;
    }

    if (inserted.length > 0 || lastSeq !== attempt.lastSeq) {
      const insertedSeqs = new Set(inserted.map((r) => r.seq));
      const fresh = new Map(input.events.filter((e) => insertedSeqs.has(e.seq)).map((e) => [e.seq, e.event] as const));
      const simTimeMs = [...fresh.values()].reduce((m, e) => Math.max(m, e.atMs), attempt.simTimeMs);
      const set: { simTimeMs: number; lastSeq?: number; currentTest?: DiagnosticTest | null } = { simTimeMs };
      if (lastSeq !== attempt.lastSeq) {
        const setup = await setupThrough(tx, attemptId, attempt.lastSeq, lastSeq, fresh);
        set.lastSeq = lastSeq;
        set.currentTest = testOfSetup(setup.controls, { engine: setup.engineGuess });
        remember = { lastSeq, setup };
      }
      await tx.update(attempts).set(set).where(eq(attempts.id, attemptId));
    }
    return { response: { lastSeq, stored: inserted.length }, remember };
  });
  // Cached only once the transaction has committed, so a rolled-back batch leaves nothing behind.
  if (remember) setups.of(db)?.set(attemptId, remember);
  return response;
}
