/**
 * The model's own rectifier solution against ngspice on the very same
 * circuit, at operating points the bench reaches: the circuit comes from a
 * running attempt (`rectifierCircuitAt`), both solvers get the same object.
 * Tolerance: 5 % on mean output current and mean voltages (the brief's
 * bound for the model's average bridge), and the same dominant ripple
 * frequency.
 */
import { beforeAll, describe, expect, it } from 'vitest';
import { defaultVehicleParams } from '../../sim/params';
import type { FaultKind } from '../../sim/faults';
import type { InputEvent } from '../../sim/inputs';
import { runAttempt } from '../../sim/replay';
import { rectifierCircuitAt, solveRectifier } from '../../sim/rectifier';
import type { RectifierCircuit } from '../../sim/circuit';
import { spiceSolve, warmUpSpice } from './spice-harness';

const params = defaultVehicleParams();
const START: InputEvent[] = [
  { kind: 'key', atMs: 0, position: 'start' },
  { kind: 'key', atMs: 1500, position: 'on' },
];

function circuitAfter(events: InputEvent[], untilMs: number, fault?: FaultKind): RectifierCircuit {
  const all: InputEvent[] = fault
    ? [{ kind: 'fault-inject', atMs: 0, fault: { id: 'f', kind: fault, severity01: 0.5, onsetS: 0 } }, ...START, ...events]
    : [...START, ...events];
  return rectifierCircuitAt(params, runAttempt(params, 1, all, untilMs, { snapshotEveryMs: 5000 }).final.state);
}

const rpm = (value: number): InputEvent => ({ kind: 'rpm', atMs: 2000, rpm: value });
const pile = (dial01: number): InputEvent => ({ kind: 'pile', atMs: 5000, dial01 });

const POINTS: [string, () => RectifierCircuit][] = [
  ['idle, recharging after the start', () => circuitAfter([], 10000)],
  ['idle with the pile on (heavy overlap at low speed)', () => circuitAfter([pile(0.5)], 9000)],
  ['2,000 rpm, light load (regulating)', () => circuitAfter([rpm(2000)], 10000)],
  ['2,000 rpm loaded to about 12 V (full field)', () => circuitAfter([rpm(2000), pile(0.75)], 9000)],
  ['3,000 rpm, part load', () => circuitAfter([rpm(3000), pile(0.4)], 9000)],
  ['2,000 rpm, one open diode, loaded', () => circuitAfter([rpm(2000), pile(0.7)], 9000, 'diode-open')],
  ['2,000 rpm, one shorted diode, loaded', () => circuitAfter([rpm(2000), pile(0.5)], 9000, 'diode-shorted')],
  ['2,000 rpm, one open phase, loaded', () => circuitAfter([rpm(2000), pile(0.6)], 9000, 'stator-phase-open')],
];

beforeAll(async () => {
  await warmUpSpice();
}, 60_000);

describe('the model’s rectifier solution against ngspice', () => {
  for (const [name, circuitOf] of POINTS) {
    it(`agrees within 5 % at ${name}`, async () => {
      // Reference: ngspice transient via eecircuit-engine (tests/reference/spice-harness.ts).
      const circuit = circuitOf();
      const model = solveRectifier(circuit);
      const spice = await spiceSolve(circuit);
      expect(spice.meanOutputCurrentA).toBeGreaterThan(5);
      expect(Math.abs(model.meanOutputCurrentA / spice.meanOutputCurrentA - 1)).toBeLessThan(0.05);
      expect(Math.abs(model.meanBplusV / spice.meanBplusV - 1)).toBeLessThan(0.05);
      expect(Math.abs(model.meanBatteryV / spice.meanBatteryV - 1)).toBeLessThan(0.05);
      expect(model.dominantRippleHz).toBeCloseTo(spice.dominantRippleHz, 6);
      // Ripple is small against the mean, so it gets a looser relative bound.
      expect(Math.abs(model.rippleRmsV / spice.rippleRmsV - 1)).toBeLessThan(0.15);
    }, 60_000);
  }
});
