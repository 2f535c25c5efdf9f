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
 *
 * Storing a batch of events (attempts/events.ts) carries only the bench's
 * set-up forward, without the model: the controls the events leave, folded
 * in time order, which is enough to name the test being set up. It is carried
 * on the same way, from where it stopped, while no event comes before it.
 */
import type { CarChange } from '../../sim/car-changes.ts';
import { applyInput, initialControls, type Controls, type InputEvent } from '../../sim/inputs.ts';
import type { VehicleParams } from '../../sim/params.ts';
import { advance, orderEvents, startPoint, type ReplayPoint } from '../../sim/replay.ts';
import { isNoteEvent, type LogEvent } from '../../shared/api/attempts.ts';

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

/** The bench set-up after a run of events: what names the test being set up for the live board's list. */
export interface Setup {
  controls: Controls;
  /** Running after a start until the key goes off. */
  engineGuess: 'off' | 'cranking' | 'running';
  /** The latest sim time among the events folded in. */
  maxAtMs: number;
}

export const initialSetup = (): Setup => ({ controls: initialControls(), engineGuess: 'off', maxAtMs: 0 });

/** The set-up after `events` too, taken in time order (equal times in the order given); readings change nothing of it. */
export function foldSetup(from: Setup, events: readonly LogEvent[]): Setup {
  let { controls, engineGuess, maxAtMs } = from;
  for (const e of orderEvents(events)) {
    maxAtMs = Math.max(maxAtMs, e.atMs);
    if (isNoteEvent(e)) continue;
    controls = applyInput(controls, e, 0);
    if (e.kind === 'key') engineGuess = e.position === 'start' ? 'cranking' : e.position === 'off' ? 'off' : engineGuess === 'cranking' ? 'running' : engineGuess;
  }
  return { controls, engineGuess, maxAtMs };
}

/**
 * The set-up after the whole log: enough to name the test being set up for
 * the live board's list, which re-runs the model for anything finer.
 */
export function setupAfter(events: readonly LogEvent[]): Setup {
  return foldSetup(initialSetup(), events);
}

/** The set-up after `base` and then `added`, when it can be carried on: none of `added` is earlier in sim time than the events folded into `base`. */
export function carryOnSetup(base: Setup, added: readonly LogEvent[]): Setup | null {
  return added.every((e) => e.atMs >= base.maxAtMs) ? foldSetup(base, added) : null;
}
