/**
 * Replay: an attempt is (params, seed, ordered input events). Running it from
 * the start always gives the same states; snapshots taken every few seconds
 * of sim time let any moment be reached by stepping at most one snapshot
 * interval. The client's animation loop steps through the same functions.
 *
 * Event timing: an event applies before the first step whose start time is
 * >= its atMs; events with equal atMs apply in log order. Scenario faults
 * are `fault-inject` events at atMs 0 (their onsetS delays them).
 */

import type { VehicleParams } from './params.ts';
import type { Controls, InputEvent } from './inputs.ts';
import type { SimState } from './step.ts';

/** Everything needed to carry on from a moment. */
export interface ReplayPoint {
  state: SimState;
  controls: Controls;
  /** Index of the first event not yet applied. */
  nextEventIndex: number;
}

export interface AttemptRun {
  final: ReplayPoint;
  /** Ordered by time; the first is at 0 ms. */
  snapshots: ReplayPoint[];
}

export function startPoint(params: VehicleParams, seed: number): ReplayPoint {
  void params;
  void seed;
  throw new Error('startPoint: not implemented yet');
}

/** Apply due events and step `steps` times. Pure. */
export function advance(params: VehicleParams, point: ReplayPoint, events: readonly InputEvent[], steps: number): ReplayPoint {
  void params;
  void point;
  void events;
  void steps;
  throw new Error('advance: not implemented yet');
}

export function runAttempt(
  params: VehicleParams,
  seed: number,
  events: readonly InputEvent[],
  untilMs: number,
  options: { snapshotEveryMs: number },
): AttemptRun {
  void params;
  void seed;
  void events;
  void untilMs;
  void options;
  throw new Error('runAttempt: not implemented yet');
}

export function stateAt(
  params: VehicleParams,
  seed: number,
  events: readonly InputEvent[],
  atMs: number,
  snapshots?: readonly ReplayPoint[],
): ReplayPoint {
  void params;
  void seed;
  void events;
  void atMs;
  void snapshots;
  throw new Error('stateAt: not implemented yet');
}
