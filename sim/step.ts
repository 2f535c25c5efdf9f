/**
 * The model's one pure step: engine, belt, alternator, field and regulator,
 * battery, wiring, loads and the bench's pile, advanced by a fixed dt.
 * `step` never mutates its arguments and uses no clock and no Math.random:
 * a seeded generator lives in the state, so the same params, seed and
 * controls give the same states bit for bit.
 *
 * Units are in the names: ms and s, rpm, V, A, C (degrees Celsius), Nm.
 */

import type { VehicleParams } from './params.ts';
import type { Controls, Conductor, KeyPosition } from './inputs.ts';
import type { NetworkSolution } from './network.ts';

/** The fixed step. Replays always use it; changing it changes every stored replay. */
export const DT_MS = 10;

export type EngineStatus = 'off' | 'cranking' | 'running' | 'stalled';

/** Plain JSON-serialisable data. */
export interface SimState {
  timeMs: number;
  /** State of the seeded generator (uint32). */
  rngState: number;

  engineStatus: EngineStatus;
  engineRpm: number;
  /** Progress toward firing while cranking, 0..1. */
  crankProgress01: number;
  /** Time the starter voltage or running voltage has been too low. */
  engineLowVoltageS: number;
  /** Key position at the end of the previous step (to detect turns of the key). */
  lastKey: KeyPosition;

  altRpm: number;
  beltSlipping: boolean;
  /** Torque the alternator asked of the belt at the last step. */
  altTorqueNm: number;
  alternatorTempC: number;

  fieldCurrentA: number;
  fieldDuty01: number;

  batterySoc01: number;
  /** Surface (polarisation) charge: positive after charging, negative after a heavy discharge. */
  batteryPolarizationV: number;

  /** Heat in the fusible link as a fraction of what melts it. */
  fusibleLinkHeat01: number;
  fusibleLinkBlown: boolean;

  pileTempC: number;
  pileTripped: boolean;

  /** The 10 A fuse of the series ammeter. */
  ammeterFuseBlown: boolean;
  lastAmmeterInSeries: boolean;

  /** Time left before modules sleep with the key off (0: asleep). */
  modulesAwakeS: number;

  chargeWarning: boolean;
  /** Time the regulator has been unable to hold its set point. */
  lowChargeS: number;

  /** Clamp's hall-sensor offset; drawn anew whenever the clamp is moved. */
  clampOffsetA: number;
  clampConductorSeen: Conductor | null;

  net: NetworkSolution;
}

export type { Controls };

export function initialState(params: VehicleParams, seed: number): SimState {
  void params;
  void seed;
  throw new Error('initialState: not implemented yet');
}

export function step(params: VehicleParams, state: SimState, controls: Controls, dtMs: number = DT_MS): SimState {
  void params;
  void state;
  void controls;
  void dtMs;
  throw new Error('step: not implemented yet');
}
