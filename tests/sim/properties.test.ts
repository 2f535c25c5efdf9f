/**
 * Properties over random attempts (fast-check): Kirchhoff's current law at
 * every node at every step, monotone responses to load and speed, and
 * determinism of replay.
 */
import { describe, it } from 'vitest';
import fc from 'fast-check';
import { VEHICLE_PARAM_BOUNDS, defaultVehicleParams } from '../../sim/params';
import type { VehicleParams } from '../../sim/params';
import { FAULT_KINDS, faultChange } from '../../sim/faults';
import type { Fault } from '../../sim/faults';
import type { InputEvent } from '../../sim/inputs';
import { CONNECTION_POINTS } from '../../sim/inputs';
import { kclResidualsA } from '../../sim/network';
import { advance, runAttempt, startPoint, stateAt } from '../../sim/replay';
import { step } from '../../sim/step';
import { bridgeOperatingInputs, outputCurve } from '../../sim/instruments';
import { BPLUS_CLAMP_V } from '../../sim/network';
import { openCircuitVoltageV } from '../../sim/battery';
import type { SimState } from '../../sim/step';
import { RESISTANCE_CCA_RANGE } from '../../shared/vehicle-rules';
import { inductanceForRatingH } from '../../sim/vehicle-checks';

const params = defaultVehicleParams();

/**
 * Cases of the sanity property: 100,000 when LOADLINE_LONG_PROPERTIES is set
 * (run before a change to the model lands), 2,000 otherwise.
 */
const SANITY_RUNS = process.env.LOADLINE_LONG_PROPERTIES ? 100_000 : 2_000;

/**
 * A vehicle with every number at its fraction u[i] of its editor range, the
 * battery's resistance within the range its CCA allows and the stator sized
 * for the nameplate rating (the editor's car-wide rules, shared/vehicle-rules.ts);
 * null when no inductance inside the editor's range delivers the rating.
 */
function vehicleInBounds(paths: readonly (keyof typeof VEHICLE_PARAM_BOUNDS)[], u: readonly number[]): VehicleParams | null {
  const q = defaultVehicleParams() as unknown as Record<string, Record<string, number> | number>;
  paths.forEach((path, i) => {
    const b = VEHICLE_PARAM_BOUNDS[path];
    const v = b.integer ? Math.round(b.min + (b.max - b.min) * u[i]!) : b.min + (b.max - b.min) * u[i]!;
    const [group, key] = path.split('.') as [string, string | undefined];
    if (key === undefined) q[group] = v;
    else (q[group] as Record<string, number>)[key] = v;
  });
  const vehicle = q as unknown as VehicleParams;
  const r = RESISTANCE_CCA_RANGE;
  const ur = u[paths.indexOf('battery.internalResistanceOhmAt25C')]!;
  vehicle.battery.internalResistanceOhmAt25C = (r.min + (r.max - r.min) * ur) / vehicle.battery.cca;
  const lb = VEHICLE_PARAM_BOUNDS['alternator.synchronousInductanceH'];
  const h = inductanceForRatingH(vehicle, lb.min, lb.max);
  if (h === null) return null;
  vehicle.alternator.synchronousInductanceH = h;
  return vehicle;
}

/** Every node within what its sources can drive (see the sanity property). */
function withinSources(vehicle: VehicleParams, state: SimState): boolean {
  const op = bridgeOperatingInputs(vehicle, state);
  const ceiling = Math.max(Math.sqrt(3) * op.emfPeakV, BPLUS_CLAMP_V);
  const battery = openCircuitVoltageV(state.batterySoc01, vehicle.battery.tempC, vehicle.battery.sulfation01) + state.batteryPolarizationV + state.batterySurfaceChargeV;
  const limit = Math.max(ceiling, Math.abs(battery)) + 1e-6;
  return Object.values(state.net.nodeV).every((v) => Math.abs(v) <= limit) && state.net.nodeV.bplus - state.net.nodeV.altCase <= Math.max(ceiling, battery) + 1e-6;
}

const faultArb: fc.Arbitrary<Fault> = fc.record({
  id: fc.constantFrom('f1', 'f2', 'f3'),
  kind: fc.constantFrom(...FAULT_KINDS),
  severity01: fc.double({ min: 0, max: 1, noNaN: true }),
  onsetS: fc.double({ min: 0, max: 20, noNaN: true }),
  intermittent: fc.option(fc.record({ periodS: fc.double({ min: 0.5, max: 5, noNaN: true }), onFraction01: fc.double({ min: 0, max: 1, noNaN: true }) }), { nil: null }),
});

const eventArb: fc.Arbitrary<Omit<InputEvent, 'atMs'>> = fc.oneof(
  fc.record({ kind: fc.constant('key' as const), position: fc.constantFrom('off' as const, 'on' as const, 'start' as const) }),
  fc.record({ kind: fc.constant('rpm' as const), rpm: fc.integer({ min: 0, max: 4000 }) }),
  fc.record({ kind: fc.constant('pile' as const), dial01: fc.double({ min: 0, max: 1, noNaN: true }) }),
  fc.record({ kind: fc.constant('accessory' as const), id: fc.constantFrom('headlamps', 'blower', 'radiator-fan', 'audio'), on: fc.boolean() }),
  fc.record({ kind: fc.constant('lead' as const), which: fc.constantFrom('red' as const, 'black' as const), point: fc.constantFrom(null, ...CONNECTION_POINTS) }),
  fc.record({ kind: fc.constant('clamp' as const), conductor: fc.constantFrom(null, 'bplus-cable' as const, 'ground-strap' as const), arrow: fc.constantFrom('toward-battery' as const, 'toward-alternator' as const) }),
  fc.record({ kind: fc.constant('clamp-zero' as const) }),
  fc.record({ kind: fc.constant('ammeter' as const), inSeries: fc.boolean() }),
  fc.record({ kind: fc.constant('bplus-disconnect' as const), connected: fc.boolean() }),
  fc.record({ kind: fc.constant('fault-inject' as const), fault: faultArb }),
  fc.record({ kind: fc.constant('fault-clear' as const), faultId: fc.constantFrom('f1', 'f2', 'f3') }),
) as fc.Arbitrary<Omit<InputEvent, 'atMs'>>;

/** A random but plausible attempt: the engine is started early so the alternator runs. */
const attemptArb: fc.Arbitrary<InputEvent[]> = fc
  .array(fc.tuple(fc.integer({ min: 0, max: 20000 }), eventArb), { maxLength: 25 })
  .map((list) => {
    const start: InputEvent[] = [
      { kind: 'key', atMs: 0, position: 'start' },
      { kind: 'key', atMs: 1500, position: 'on' },
    ];
    const rest = list.map(([atMs, e]) => ({ ...e, atMs }) as InputEvent).sort((a, b) => a.atMs - b.atMs);
    return [...start, ...rest].sort((a, b) => a.atMs - b.atMs);
  });

describe('properties of the model', () => {
  it('keeps the sum of currents at every node at zero at every step', () => {
    // Kirchhoff's current law (common practice, no source).
    fc.assert(
      fc.property(attemptArb, fc.integer({ min: 0, max: 2 ** 31 }), (events, seed) => {
        let p = startPoint(params, seed);
        for (let i = 0; i < 2200; i++) {
          p = advance(params, p, events, 1);
          const r = kclResidualsA(p.state.net);
          for (const v of Object.values(r)) if (!(Math.abs(v) < 1e-6)) return false;
        }
        return true;
      }),
      { numRuns: 12 },
    );
  });

  it('never raises the battery voltage when the carbon pile takes more', () => {
    // Physics of a source with internal resistance (OpenStax College Physics; common practice).
    fc.assert(
      fc.property(attemptArb, fc.integer({ min: 500, max: 20000 }), fc.double({ min: 0, max: 0.99, noNaN: true }), fc.double({ min: 0.001, max: 0.5, noNaN: true }), (events, atMs, dial, more) => {
        const p = stateAt(params, 1, events, atMs);
        const lighter = step(params, p.state, { ...p.controls, pileDial01: dial });
        const heavier = step(params, p.state, { ...p.controls, pileDial01: Math.min(1, dial + more) });
        return heavier.net.nodeV.batteryPos <= lighter.net.nodeV.batteryPos + 1e-9;
      }),
      { numRuns: 40 },
    );
  });

  it('never gives less available output at a higher alternator speed', () => {
    // AeroElectric (output rises then flattens); machine theory (self-limiting, not falling). Random units within the editor's bounds.
    const within = (path: keyof typeof VEHICLE_PARAM_BOUNDS) => {
      const b = VEHICLE_PARAM_BOUNDS[path];
      return fc.double({ min: b.min, max: b.max, noNaN: true });
    };
    fc.assert(
      fc.property(
        within('alternator.synchronousInductanceH'),
        within('alternator.statorResistanceOhmAt20C'),
        within('alternator.cutInAltRpm'),
        fc.integer({ min: 4, max: 9 }),
        within('alternator.fieldKneeCurrentA'),
        fc.boolean(),
        fc.constantFrom<Fault['kind'] | null>(null, 'diode-open', 'stator-phase-open', 'wrong-rating', 'field-open'),
        (l, r, cutIn, pairs, knee, hot, kind) => {
          const q: VehicleParams = defaultVehicleParams();
          Object.assign(q.alternator, { synchronousInductanceH: l, statorResistanceOhmAt20C: r, cutInAltRpm: cutIn, polePairs: pairs, fieldKneeCurrentA: knee });
          const faults: Fault[] = kind ? [{ id: 'x', kind, severity01: 0.5, onsetS: 0 }] : [];
          const curve = outputCurve(q, faults.map((f) => faultChange(f)), { hot });
          return curve.every((pt, i) => i === 0 || pt.currentA >= curve[i - 1]!.currentA - 1e-6);
        },
      ),
      { numRuns: 40 },
    );
  });

  it('with a shorted diode, dips by no more than 2.5 % of its output as speed rises (interpolation of the cached characteristic)', () => {
    // Self-consistency of the model (the direct periodic solution rises monotonically; see docs/model.md).
    fc.assert(
      fc.property(fc.double({ min: 20e-6, max: 400e-6, noNaN: true }), fc.integer({ min: 4, max: 9 }), (l, pairs) => {
        const q: VehicleParams = defaultVehicleParams();
        Object.assign(q.alternator, { synchronousInductanceH: l, polePairs: pairs });
        const curve = outputCurve(q, [faultChange({ id: 'x', kind: 'diode-shorted', severity01: 0.5, onsetS: 0 })], { hot: false });
        let peak = 0;
        return curve.every((pt) => {
          peak = Math.max(peak, pt.currentA);
          return pt.currentA >= 0.975 * peak - 1e-6;
        });
      }),
      { numRuns: 20 },
    );
  });

  it('stays finite and physically sane for any vehicle inside the editor’s bounds', () => {
    // The bounds table promises a stable model inside it (no source; the editor relies on it). Every number is
    // drawn inside its own range, the battery's resistance inside the range its CCA allows (shared/vehicle-rules.ts:
    // the CCA definition, OEM GM). No node may exceed what its sources can drive: the battery's internal
    // voltage, the bridge's own ceiling (the peak line-to-line EMF, CRC handbook 22.2.5) or the B+ load-dump clamp.
    const paths = Object.keys(VEHICLE_PARAM_BOUNDS) as (keyof typeof VEHICLE_PARAM_BOUNDS)[];
    fc.assert(
      fc.property(
        fc.array(fc.double({ min: 0, max: 1, noNaN: true }), { minLength: paths.length, maxLength: paths.length }),
        fc.integer({ min: 0, max: 3500 }),
        fc.double({ min: 0, max: 1, noNaN: true }),
        (u, rpm, dial) => {
          const vehicle = vehicleInBounds(paths, u);
          fc.pre(vehicle !== null);
          if (vehicle === null) return true;
          const events: InputEvent[] = [
            { kind: 'key', atMs: 0, position: 'start' },
            { kind: 'key', atMs: 3000, position: 'on' },
            { kind: 'rpm', atMs: 4000, rpm },
            { kind: 'pile', atMs: 6000, dial01: dial },
            { kind: 'pile', atMs: 12000, dial01: 0 },
          ];
          const run = runAttempt(vehicle, 1, events, 16000, { snapshotEveryMs: 1000 });
          return [...run.snapshots, run.final].every(({ state }) => {
            const numbers = [...Object.values(state.net.nodeV), ...Object.values(state.net.branchA), state.fieldCurrentA, state.altRpm, state.engineRpm, state.batterySoc01];
            const anyBad = numbers.some((v) => !Number.isFinite(v));
            // B+ never below the case (the bridge's diodes), the battery never beyond 20 V.
            const sane = !anyBad && state.net.nodeV.bplus - state.net.nodeV.altCase > -0.01 && Math.abs(state.net.nodeV.batteryPos) < 20;
            return sane && withinSources(vehicle, state);
          });
        },
      ),
      { numRuns: SANITY_RUNS },
    );
  });

  it('gives identical states for identical inputs', () => {
    fc.assert(
      fc.property(attemptArb, fc.integer({ min: 0, max: 2 ** 31 }), (events, seed) => {
        const a = runAttempt(params, seed, events, 8000, { snapshotEveryMs: 1000 }).final.state;
        const b = runAttempt(defaultVehicleParams(), seed, structuredClone(events), 8000, { snapshotEveryMs: 3000 }).final.state;
        return JSON.stringify(a) === JSON.stringify(b);
      }),
      { numRuns: 10 },
    );
  });

  it('replays from a snapshot to the same state as from the start', () => {
    fc.assert(
      fc.property(attemptArb, fc.integer({ min: 0, max: 20000 }), (events, atMs) => {
        const run = runAttempt(params, 11, events, 20000, { snapshotEveryMs: 2500 });
        const fromSnapshot = stateAt(params, 11, events, atMs, run.snapshots);
        const fromStart = stateAt(params, 11, events, atMs);
        return JSON.stringify(fromSnapshot) === JSON.stringify(fromStart);
      }),
      { numRuns: 10 },
    );
  });
});
