/**
 * Replay: an attempt is (params, seed, ordered input events). Running it from
 * the start always gives the same states; snapshots taken every few seconds
 * of sim time let any moment be reached by stepping at most one snapshot
 * interval. The client's animation loop uses the same `advance`: it keeps its
 * own time accumulator and asks for a whole number of steps per frame.
 *
 * Event timing: an event applies before the first step whose start time is
 * >= its atMs; events with equal atMs apply in log order. A compiled car's
 * schedule of changes (compiled-car.ts) is in the controls from the start
 * (`startPoint`'s `changes`), so it is in force from the first state.
 *
 * Units: ms of sim time.
 */

import type { VehicleParams } from './params.ts';
import type { CarChange } from './car-changes.ts';
import type { Controls, InputEvent } from './inputs.ts';
import { applyInput } from './inputs.ts';
import type { SimState } from './step.ts';
import { DT_MS, blankState, initialState, step, stepInto } from './step.ts';
import { rawClampReadingA } from './instruments.ts';
import { workspace } from './workspace.ts';

/** Everything needed to carry on from a moment. */
export interface ReplayPoint {
  state: SimState;
  /** Controls after every event applied so far (may be ahead of state.controls until the next step). */
  controls: Controls;
  /** Index of the first event not yet applied. */
  nextEventIndex: number;
}

export interface AttemptRun {
  final: ReplayPoint;
  /** Ordered by time; the first is at 0 ms. */
  snapshots: ReplayPoint[];
}

export function startPoint(params: VehicleParams, seed: number, changes: readonly CarChange[] = []): ReplayPoint {
  const state = initialState(params, seed, changes);
  return { state, controls: state.controls, nextEventIndex: 0 };
}

/** Events in time order; a stable sort keeps the order of equal times. */
export function orderEvents<E extends { atMs: number }>(events: readonly E[]): readonly E[] {
  for (let i = 1; i < events.length; i++) {
    if (events[i]!.atMs < events[i - 1]!.atMs) {
      return events.map((e, k) => ({ e, k })).sort((a, b) => a.e.atMs - b.e.atMs || a.k - b.k).map((x) => x.e);
    }
  }
  return events;
}

/**
 * The state the steps before the last of an `advance` are written into: only
 * the last step makes the new state returned, so a long advance allocates
 * one state, not one per step. Nothing outside `advance` ever sees it.
 */
if (!workspace.replay.workingState) workspace.replay.workingState = blankState();
const workingState: SimState = workspace.replay.workingState;

/**
 * Apply due events and step `steps` times (events must be in time order; the
 * client appends live events with atMs = the current sim time). Pure.
 */
export function advance(
  params: VehicleParams,
  point: ReplayPoint,
  events: readonly InputEvent[],
  steps: number,
): ReplayPoint {
  if (steps <= 0) return point;
  let state = point.state;
  let controls = point.controls;
  let next = point.nextEventIndex;
  // The time of the next event, read once per event rather than once per step
  // (events of different kinds have different shapes, which makes reading a
  // field of "any event" slow); Infinity once the log is used up.
  let nextAtMs = next < events.length ? events[next]!.atMs : Infinity;
  for (let i = 0; i < steps; i++) {
    while (nextAtMs <= state.timeMs) {
      const ev = events[next]!;
      controls = applyInput(controls, ev, ev.kind === 'clamp-zero' ? rawClampReadingA(state, controls) : 0);
      next++;
      nextAtMs = next < events.length ? events[next]!.atMs : Infinity;
    }
    if (i === steps - 1) state = step(params, state, controls, DT_MS);
    else state = stepInto(params, state, controls, DT_MS, state === point.state ? workingState : state);
  }
  return { state, controls, nextEventIndex: next };
}

/** Steps needed to reach `atMs` from `fromMs` (the state at a moment is the last step boundary at or before it). */
function stepsBetween(fromMs: number, atMs: number): number {
  return Math.max(0, Math.floor(atMs / DT_MS) - Math.floor(fromMs / DT_MS));
}

/**
 * Run an attempt from the start to `untilMs`, keeping a snapshot every
 * `snapshotEveryMs` (rounded to whole steps) for later seeks.
 */
export function runAttempt(
  params: VehicleParams,
  seed: number,
  events: readonly InputEvent[],
  untilMs: number,
  options: { snapshotEveryMs: number; changes?: readonly CarChange[] },
): AttemptRun {
  const ordered = orderEvents(events);
  const every = Math.max(1, Math.round(options.snapshotEveryMs / DT_MS));
  const total = stepsBetween(0, untilMs);
  let point = startPoint(params, seed, options.changes);
  const snapshots: ReplayPoint[] = [point];
  for (let done = 0; done < total; ) {
    const n = Math.min(every, total - done);
    point = advance(params, point, ordered, n);
    done += n;
    if (n === every && done < total) snapshots.push(point);
  }
  return { final: point, snapshots };
}

/**
 * The moment at `atMs` (the step boundary at or before it), reached from the
 * latest snapshot not after it, or from the start without snapshots. The
 * snapshots must come from a run of the same params, seed, changes and events.
 */
export function stateAt(
  params: VehicleParams,
  seed: number,
  events: readonly InputEvent[],
  atMs: number,
  snapshots?: readonly ReplayPoint[],
  changes: readonly CarChange[] = [],
): ReplayPoint {
  const ordered = orderEvents(events);
  let from: ReplayPoint | null = null;
  if (snapshots) {
    // Binary search for the last snapshot at or before atMs.
    let lo = 0;
    let hi = snapshots.length - 1;
    while (lo <= hi) {
      const mid = (lo + hi) >> 1;
      if (snapshots[mid]!.state.timeMs <= atMs) {
        from = snapshots[mid]!;
        lo = mid + 1;
      } else hi = mid - 1;
    }
  }
  from ??= startPoint(params, seed, changes);
  return advance(params, from, ordered, stepsBetween(from.state.timeMs, atMs));
}
