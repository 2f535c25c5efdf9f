/**
 * Changes of a car as parameter operations, and the compiled car: the
 * operations reproduce each fault's transform bit for bit, the compiled car
 * names no fault, and its faults are in force from the first state.
 * A self-consistency check of the model's bookkeeping (common practice, no source).
 */
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { applyChanges, applyOp, applyOps, type CarChange } from '../../sim/car-changes';
import { compileCar } from '../../sim/compiled-car';
import { FAULT_KINDS, applyFaults, faultChange, type Fault, type FaultKind } from '../../sim/faults';
import { applyInput, initialControls } from '../../sim/inputs';
import { readMeters } from '../../sim/instruments';
import { defaultVehicleParams, type VehicleParams } from '../../sim/params';
import { runAttempt, startPoint, stateAt } from '../../sim/replay';

/** The transforms as they were written before they became operations: the oracle the operations must match bit for bit. */
function legacyTransform(p: VehicleParams, kind: FaultKind, severity01: number): VehicleParams {
  const s = severity01 < 0 ? 0 : severity01 > 1 ? 1 : severity01;
  const withIndex = (list: readonly number[], index: number) => (list.includes(index) ? [...list] : [...list, index].sort((a, b) => a - b));
  switch (kind) {
    case 'fusible-link-open':
      return { ...p, wiring: { ...p.wiring, fusibleLinkOpen: true } };
    case 'diode-open':
      return { ...p, alternator: { ...p.alternator, openDiodes: withIndex(p.alternator.openDiodes, 0) } };
    case 'diode-shorted':
      return { ...p, alternator: { ...p.alternator, shortedDiodes: withIndex(p.alternator.shortedDiodes, 0), keyOffLeakageA: p.alternator.keyOffLeakageA + 0.1 + 1.9 * s } };
    case 'stator-phase-open':
      return { ...p, alternator: { ...p.alternator, openPhases: withIndex(p.alternator.openPhases, 0) } };
    case 'field-open':
      return { ...p, alternator: { ...p.alternator, brushResistanceOhm: p.alternator.brushResistanceOhm + (s >= 1 ? 1e6 : 2 + 240 * s * s) } };
    case 'regulator-set-high':
      return { ...p, regulator: { ...p.regulator, setPointVAt25C: p.regulator.setPointVAt25C + 0.3 + 1.7 * s } };
    case 'regulator-set-low':
      return { ...p, regulator: { ...p.regulator, setPointVAt25C: p.regulator.setPointVAt25C - (0.3 + 1.2 * s) } };
    case 'regulator-full-field':
      return { ...p, regulator: { ...p.regulator, dutyFloor01: Math.max(p.regulator.dutyFloor01, 0.5 + 0.5 * s) } };
    case 'belt-slip':
      return { ...p, belt: { ...p.belt, gripNm: p.belt.gripNm * (1 - 0.9 * s), creep01: p.belt.creep01 * (1 + 14 * s) } };
    case 'bplus-high-resistance':
      return { ...p, wiring: { ...p.wiring, bplusExtraOhm: p.wiring.bplusExtraOhm + 0.05 * s } };
    case 'ground-high-resistance':
      return { ...p, wiring: { ...p.wiring, groundExtraOhm: p.wiring.groundExtraOhm + 0.05 * s } };
    case 'battery-weak':
      return {
        ...p,
        battery: {
          ...p.battery,
          internalResistanceOhmAt25C: p.battery.internalResistanceOhmAt25C * (2.8 + 4 * s),
          capacityAh: p.battery.capacityAh * (1 - 0.6 * s),
          sulfation01: Math.min(1, p.battery.sulfation01 + 0.2 + 0.6 * s),
        },
      };
    case 'key-off-draw':
      return { ...p, loads: { ...p.loads, stuckDrawA: p.loads.stuckDrawA + 0.05 + 0.95 * s } };
    case 'wrong-rating': {
      const k = 1 - 0.5 * s;
      const a = p.alternator;
      return { ...p, alternator: { ...a, ratedCurrentA: a.ratedCurrentA * k, synchronousInductanceH: a.synchronousInductanceH / k, statorResistanceOhmAt20C: a.statorResistanceOhmAt20C / k } };
    }
    case 'post-corroded':
      return { ...p, wiring: { ...p.wiring, postClampPosOhm: p.wiring.postClampPosOhm + 0.1 * s } };
  }
}

/** JSON that tells apart every bit of every number (and -0 from 0). */
const bits = (x: unknown) => JSON.stringify(x, (_k, v: unknown) => (typeof v === 'number' ? (Object.is(v, -0) ? '-0' : `n${v}`) : v));

describe('fault transforms as parameter operations', () => {
  it('reproduce every kind at any severity, alone and stacked on the others, bit for bit', () => {
    fc.assert(
      fc.property(
        fc.array(fc.record({ kind: fc.constantFrom(...FAULT_KINDS), severity01: fc.double({ min: -0.2, max: 1.2, noNaN: true }) }), { minLength: 1, maxLength: 6 }),
        fc.double({ min: 0.5, max: 2, noNaN: true }),
        (faults, scale) => {
          const base = defaultVehicleParams();
          base.alternator.keyOffLeakageA = 0.013 * scale;
          base.regulator.dutyFloor01 = 0.2 * scale;
          base.belt.gripNm *= scale;
          let expected = base;
          for (const f of faults) expected = legacyTransform(expected, f.kind, f.severity01);
          const list: Fault[] = faults.map((f, i) => ({ id: `f${i}`, kind: f.kind, severity01: f.severity01, onsetS: 0 }));
          expect(bits(applyFaults(base, list, 1))).toBe(bits(expected));
          expect(bits(applyChanges(base, list.map((f) => faultChange(f)), 1))).toBe(bits(expected));
        },
      ),
    );
  });

  it('change nothing in the parameters they are given', () => {
    const p = defaultVehicleParams();
    const before = JSON.stringify(p);
    applyOps(p, [
      { path: 'wiring.fusibleLinkOpen', op: 'set', value: true },
      { path: 'alternator.openDiodes', op: 'include', value: 2 },
      { path: 'battery.capacityAh', op: 'mul', value: 0.5 },
      { path: 'ambientC', op: 'add', value: 3 },
    ]);
    expect(JSON.stringify(p)).toBe(before);
  });

  it('include an index once, kept in order', () => {
    let p = defaultVehicleParams();
    for (const i of [3, 0, 3, 1]) p = applyOp(p, { path: 'alternator.shortedDiodes', op: 'include', value: i });
    expect(p.alternator.shortedDiodes).toEqual([0, 1, 3]);
  });

  it('follow the change’s onset and intermittent pattern', () => {
    const change: CarChange = { id: 'c1', onsetS: 10, intermittent: { periodS: 4, onFraction01: 0.25 }, ops: [{ path: 'wiring.bplusExtraOhm', op: 'add', value: 0.02 }] };
    const p = defaultVehicleParams();
    expect(applyChanges(p, [change], 9.99)).toBe(p);
    expect(applyChanges(p, [change], 10.5).wiring.bplusExtraOhm).toBe(0.02);
    expect(applyChanges(p, [change], 11.5)).toBe(p);
  });
});

describe('the compiled car', () => {
  const faults: Fault[] = [
    { id: 'worn-brushes-in-the-back', kind: 'field-open', severity01: 0.4, onsetS: 0, intermittent: null },
    { id: 'loose-b-plus-nut', kind: 'bplus-high-resistance', severity01: 0.8, onsetS: 30, intermittent: { periodS: 8, onFraction01: 0.4 } },
  ];

  it('bakes the permanent faults into the parameters and schedules the others under opaque ids, naming no fault', () => {
    const car = compileCar(defaultVehicleParams(), faults, 'Invented test car');
    expect(car.params.label).toBe('Invented test car');
    expect(car.params.alternator.brushResistanceOhm).toBe(applyFaults(defaultVehicleParams(), [faults[0]!], 0).alternator.brushResistanceOhm);
    expect(car.params.wiring.bplusExtraOhm).toBe(0);
    expect(car.changes).toEqual([{ id: 'c1', onsetS: 30, intermittent: { periodS: 8, onFraction01: 0.4 }, ops: [{ path: 'wiring.bplusExtraOhm', op: 'add', value: 0.05 * 0.8 }] }]);
    const text = JSON.stringify(car);
    for (const word of ['field-open', 'bplus-high-resistance', 'worn-brushes', 'loose-b-plus', 'severity', '"kind"']) expect(text).not.toContain(word);
  });

  it('is in force from the first state: a link open in the car reads open at 0 ms', () => {
    const link: Fault[] = [{ id: 'x', kind: 'fusible-link-open', severity01: 1, onsetS: 0, intermittent: null }];
    const car = compileCar(defaultVehicleParams(), link, 'car');
    const start = startPoint(car.params, 5, car.changes);
    expect(readMeters(car.params, start.state).fusibleLinkOpen).toBe(true);
    // The same fault as an event at 0 ms only takes hold at the first step: what the compiled car fixes.
    const old = startPoint(defaultVehicleParams(), 5);
    expect(readMeters(defaultVehicleParams(), old.state).fusibleLinkOpen).toBe(false);
  });

  it('seeks from snapshots to the states of a run from the start, schedule included', () => {
    const car = compileCar(defaultVehicleParams(), [faults[1]!], 'car');
    const events = [
      { kind: 'lead' as const, atMs: 0, which: 'red' as const, point: 'alt-bplus' as const },
      { kind: 'lead' as const, atMs: 0, which: 'black' as const, point: 'battery-pos' as const },
      { kind: 'key' as const, atMs: 500, position: 'start' as const },
      { kind: 'key' as const, atMs: 2500, position: 'on' as const },
      { kind: 'rpm' as const, atMs: 3000, rpm: 2000 },
      { kind: 'accessory' as const, atMs: 3000, id: 'headlamps', on: true },
      { kind: 'accessory' as const, atMs: 3000, id: 'blower', on: true },
    ];
    const run = runAttempt(car.params, 9, events, 45_000, { snapshotEveryMs: 5_000, changes: car.changes });
    for (const atMs of [31_000, 33_500, 40_000]) {
      const fromStart = stateAt(car.params, 9, events, atMs, undefined, car.changes);
      const fromSnapshot = stateAt(car.params, 9, events, atMs, run.snapshots, car.changes);
      expect(bits(fromSnapshot.state)).toBe(bits(fromStart.state));
    }
    expect(run.final.controls.changes.map((c) => c.id)).toEqual(['c1']);
    // The scheduled change shows in the drop across the B+ circuit while it is on, and not before its onset.
    const dropAt = (atMs: number) => readMeters(car.params, stateAt(car.params, 9, events, atMs, run.snapshots, car.changes).state).voltmeterV!;
    expect(dropAt(31_500) - dropAt(29_500)).toBeGreaterThan(0.05);
  });

  it('takes a change applied and cleared by events, as a live injection is', () => {
    const change: CarChange = { id: 'live-7', onsetS: 0, intermittent: null, ops: [{ path: 'loads.stuckDrawA', op: 'add', value: 0.5 }] };
    let c = applyInput(initialControls(), { kind: 'change-apply', atMs: 100, change }, 0);
    expect(c.changes).toEqual([change]);
    c = applyInput(c, { kind: 'change-apply', atMs: 200, change: { ...change, onsetS: 1 } }, 0);
    expect(c.changes).toHaveLength(1);
    c = applyInput(c, { kind: 'change-clear', atMs: 300, changeId: 'live-7' }, 0);
    expect(c.changes).toEqual([]);
  });
});
