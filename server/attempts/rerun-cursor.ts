/**
 * The server's one way of carrying a re-run of an attempt forward: from the
 * attempt's seed, on its compiled car (the schedule of changes in force from
 * the first state), over the model's events of its log in time order, a
 * number of model steps at a time. Grading's re-run (grading/rerun.ts,
 * carried ahead while students work by grading/run-ahead.ts) and the class
 * board's live view (live/board.ts) each hold one; what they do at each step
 * (grading's samples, the board's readings) is theirs.
 *
 * Stepping in pieces gives the states of stepping in one go (sim/replay.ts),
 * so a cursor can be carried on from wherever it stopped. Events may be
 * appended to `events` as long as none is due before the cursor's last step;
 * one that is must rewind it.
 */
import type { CarChange } from '../../sim/car-changes.ts';
import type { InputEvent } from '../../sim/inputs.ts';
import type { VehicleParams } from '../../sim/params.ts';
import { advance, orderEvents, startPoint, type ReplayPoint } from '../../sim/replay.ts';

export interface RerunCursor {
  readonly params: VehicleParams;
  readonly seed: number;
  /** The car's schedule the run starts with. */
  readonly changes: readonly CarChange[];
  /** How far the re-run has got; events before point.nextEventIndex are applied. */
  point: ReplayPoint;
  /** In time order (equal times in log order). */
  events: readonly InputEvent[];
}

/** A cursor at 0 ms. An array of events already in time order is kept as it is (not copied), so its holder may append to it. */
export function startCursor(params: VehicleParams, seed: number, events: readonly InputEvent[], changes: readonly CarChange[] = []): RerunCursor {
  return { params, seed, changes, point: startPoint(params, seed, changes), events: orderEvents(events) };
}

/** Back to 0 ms, over the same events. */
export function rewindCursor(c: RerunCursor): void {
  c.point = startPoint(c.params, c.seed, c.changes);
}

/** Carries the cursor on by `steps` model steps. */
export function stepCursor(c: RerunCursor, steps: number): void {
  c.point = advance(c.params, c.point, c.events, steps);
}

/** The sim time the cursor has reached. */
export const cursorTimeMs = (c: RerunCursor): number => c.point.state.timeMs;
