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
import type { Controls, InputEvent } from '../../sim/inputs.ts';
import { applyInput, initialControls } from '../../sim/inputs.ts';
import type { PostEventsInput, PostEventsResponse } from '../../shared/api/attempts.ts';
import { pendingActionSchema, type PendingAction } from '../../shared/api/live.ts';
import type { Db, DbOrTx } from '../db/client.ts';
import { attemptEvents, attempts, pendingInjections } from '../db/schema.ts';
import { badRequest, conflict } from '../http/errors.ts';
import { loadAttempt, loadDefinition, storedEvents } from './attempt-store.ts';
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

/**
 * The controls after the whole log, and a guess at the engine (running after
 * a start until the key goes off): enough to name the test being set up for
 * the live board's list, which re-runs the model for anything finer.
 */
export function setupAfter(events: readonly InputEvent[]): { controls: Controls; engineGuess: 'off' | 'cranking' | 'running' } {
  let controls = initialControls();
  let engineGuess: 'off' | 'cranking' | 'running' = 'off';
  for (const e of [...events].sort((a, b) => a.atMs - b.atMs)) {
    controls = applyInput(controls, e, 0);
    if (e.kind === 'key') engineGuess = e.position === 'start' ? 'cranking' : e.position === 'off' ? 'off' : engineGuess === 'cranking' ? 'running' : engineGuess;
  }
  return { controls, engineGuess };
}

export async function postEvents(db: Db, attemptId: number, input: PostEventsInput): Promise<PostEventsResponse> {
  return db.transaction(async (tx) => {
    const attempt = await loadAttempt(tx, attemptId, { lock: true });
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
      const all = (await storedEvents(tx, attemptId)).map((e) => e.event);
      const simTimeMs = all.reduce((m, e) => Math.max(m, e.atMs), attempt.simTimeMs);
      const { controls, engineGuess } = setupAfter(all);
      const currentTest = testOfSetup(controls, { engine: engineGuess });
      await tx.update(attempts).set({ lastSeq, simTimeMs, currentTest }).where(eq(attempts.id, attemptId));
    }
    return { lastSeq, stored: inserted.length };
  });
}
