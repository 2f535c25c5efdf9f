/**
 * What a car's own numbers say about it, for the scenario editor and the
 * library's checks: the output its machine constants deliver at the speed of
 * its rating, the inductance that would make them deliver the rating, and a
 * trial crank (does this car start, and if not, why). The rules and the words
 * an instructor reads are in shared/vehicle-rules.ts; this module only
 * measures, with the model itself.
 *
 * Units are in the names: A, V, H, rpm, s.
 */
import { faultChange, type Fault } from './faults.ts';
import type { VehicleParams } from './params.ts';
import type { EngineStopCause } from './step.ts';
import { outputAtSpeed } from './instruments.ts';
import { ScriptedBench } from './scripted-bench.ts';

/** Output at the speed of the nameplate rating, cold, 13.5 V held at B+ (SAE J56 conditions). */
export function deliveredAtRatingA(params: VehicleParams, faults: readonly Fault[] = []): number {
  return outputAtSpeed(params, faults.map((f) => faultChange(f)), { hot: false })(params.alternator.ratedAltRpm);
}

/**
 * The synchronous inductance with which the machine's other constants deliver
 * its nameplate rating at the rating's speed (output at speed is limited by
 * the reactance, so it falls as the inductance rises: bisection on its
 * logarithm). Null when no inductance between `minH` and `maxH` does.
 */
export function inductanceForRatingH(params: VehicleParams, minH: number, maxH: number): number | null {
  const want = params.alternator.ratedCurrentA;
  const at = (h: number) => deliveredAtRatingA({ ...params, alternator: { ...params.alternator, synchronousInductanceH: h } });
  if (at(minH) < want || at(maxH) > want) return null;
  let lo = Math.log(minH);
  let hi = Math.log(maxH);
  for (let i = 0; i < 40; i++) {
    const mid = 0.5 * (lo + hi);
    if (at(Math.exp(mid)) > want) lo = mid;
    else hi = mid;
  }
  return Math.exp(0.5 * (lo + hi));
}

/** Longest crank of a trial start; a healthy engine fires well within it. */
export const TRIAL_CRANK_S = 5;

export interface CrankTrial {
  started: boolean;
  /** Lowest voltage across the starter while cranking (V). */
  lowestStarterV: number;
  /** What stopped it, when it did not start. */
  cause: EngineStopCause | 'crank-too-long' | null;
  /** Time from the key to the engine firing (s), when it started. */
  crankS: number | null;
}

/** Crank the car as it stands (its faults present from the start) and report. */
export function crankTrial(params: VehicleParams, faults: readonly Fault[] = []): CrankTrial {
  const bench = new ScriptedBench(params, {
    seed: 1,
    events: faults.map((f, i) => ({ kind: 'fault-inject' as const, atMs: 0, fault: { ...f, id: f.id || `fault-${i}`, onsetS: 0, intermittent: null } })),
    atLeastOneStep: true,
  });
  bench.wait(0.1).key('start');
  let lowest = Infinity;
  let t = 0;
  for (; t < TRIAL_CRANK_S; t += 0.05) {
    bench.wait(0.05);
    if (bench.point.state.engineStatus !== 'cranking') break;
    const net = bench.point.state.net;
    const v = net.nodeV.junction - net.nodeV.engine;
    if (v < lowest) lowest = v;
  }
  const state = bench.point.state;
  const started = state.engineStatus === 'running';
  const cause = started ? null : state.engineStatus === 'stalled' ? state.engineStopCause : 'crank-too-long';
  return { started, lowestStarterV: Number.isFinite(lowest) ? lowest : 0, cause, crankS: started ? t : null };
}
