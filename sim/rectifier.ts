/**
 * The alternator's stator and six-diode bridge at one operating point.
 * `rectifierCircuitAt` describes the present operating point as the plain
 * circuit shared with the SPICE reference harness; `solveRectifier` is the
 * model's own fast solution of it, the same core the step uses for output.
 *
 * Units are in the names: V, A, Ohm, H, Hz.
 */

import type { RectifierCircuit, RectifierSolution } from './circuit.ts';
import type { VehicleParams } from './params.ts';
import type { SimState } from './step.ts';

export function rectifierCircuitAt(params: VehicleParams, state: SimState): RectifierCircuit {
  void params;
  void state;
  throw new Error('rectifierCircuitAt: not implemented yet');
}

export function solveRectifier(circuit: RectifierCircuit): RectifierSolution {
  void circuit;
  throw new Error('solveRectifier: not implemented yet');
}
