/**
 * The server's re-run of an attempt for grading: from the seed, with the
 * scenario's faults at 0 ms and the stored events, to the submission, taking
 * the meters every 100 ms of sim time.
 */
import type { InputEvent } from '../../sim/inputs.ts';
import { readMeters } from '../../sim/instruments.ts';
import type { VehicleParams } from '../../sim/params.ts';
import { advance, orderEvents, startPoint, type ReplayPoint } from '../../sim/replay.ts';
import { DT_MS } from '../../sim/step.ts';
import type { RunSample } from './grading.ts';

export const SAMPLE_EVERY_MS = 100;

function sample(params: VehicleParams, point: ReplayPoint): RunSample {
  return {
    atMs: point.state.timeMs,
    readings: readMeters(params, point.state),
    controls: point.state.controls,
    linkBurnt: point.state.fusibleLinkBlown,
  };
}

export interface Rerun {
  samples: RunSample[];
  final: ReplayPoint;
}

export function rerunAttempt(params: VehicleParams, seed: number, events: readonly InputEvent[], untilMs: number): Rerun {
  const ordered = orderEvents(events);
  const stepsPerSample = SAMPLE_EVERY_MS / DT_MS;
  const totalSteps = Math.floor(untilMs / DT_MS);
  let point = startPoint(params, seed);
  const samples: RunSample[] = [sample(params, point)];
  for (let done = 0; done < totalSteps; ) {
    const n = Math.min(stepsPerSample, totalSteps - done);
    point = advance(params, point, ordered, n);
    done += n;
    samples.push(sample(params, point));
  }
  return { samples, final: point };
}
