/**
 * A bridge fault that leaves a standing DC current in the stator (one diode
 * open) lowers the flux through the iron's saturation curve (docs/model.md,
 * "One open diode": the DC current's flux linkage taken as an equivalent field
 * current swinging against the rotor's, a derivation from the machine's own
 * constants).
 */
import { describe, expect, it } from 'vitest';
import { defaultVehicleParams } from '../../sim/params';
import { effectiveModel, fluxWithStatorDc, relativeFlux } from '../../sim/model';
import { outputAtSpeed } from '../../sim/instruments';
import { bridgeTable } from '../../sim/bridge';
import { faultChange } from '../../sim/faults';

const OPEN_DIODE = [faultChange({ id: 'open', kind: 'diode-open', severity01: 1, onsetS: 0 })];

describe("the stator's standing DC current", () => {
  it('is zero for a healthy bridge and of the order of the output with a diode open', () => {
    // By symmetry a healthy bridge's phase currents have no DC part (Hart, Power Electronics: six-step currents).
    expect(bridgeTable({ openDiodes: [], shortedDiodes: [], openPhases: [] }).dcVector.every((v) => v === 0)).toBe(true);
    const open = bridgeTable({ openDiodes: [0], shortedDiodes: [], openPhases: [] });
    expect(Math.max(...open.dcVector)).toBeGreaterThan(0.1);
  });

  it('lowers the flux only through the saturation curve: not at all without DC, hardly below the knee', () => {
    // The swing averages out on a straight magnetisation curve; only its bend (the knee) lowers the mean (Jensen's
    // inequality on the concave tanh; derivation in docs/model.md).
    const m = effectiveModel(defaultVehicleParams(), OPEN_DIODE, 0);
    for (const fieldA of [0.5, 2, 4.6]) expect(fluxWithStatorDc(m, fieldA, 0)).toBe(relativeFlux(m, fieldA));
    expect(fluxWithStatorDc(m, 4.6, 110) / relativeFlux(m, 4.6)).toBeLessThan(0.97);
    expect(fluxWithStatorDc(m, 0.3, 5) / relativeFlux(m, 0.3)).toBeGreaterThan(0.999);
  });

  it('one dead diode lowers output at idle and at 2,000 engine rpm, cold', () => {
    // trade-facts: "One dead diode lowers output" (US Navy NAVEDTRA 14273, Construction Mechanic Basic Vol. 2);
    // at idle about a fifth (the circuit itself, ngspice agreeing: tests/reference).
    const p = defaultVehicleParams();
    const healthy = outputAtSpeed(p, [], { hot: false });
    const open = outputAtSpeed(p, OPEN_DIODE, { hot: false });
    const idle = p.engine.idleRpm * p.belt.pulleyRatio;
    const twoThousand = 2000 * p.belt.pulleyRatio;
    expect(open(idle)).toBeLessThan(0.85 * healthy(idle));
    expect(open(twoThousand)).toBeLessThan(0.98 * healthy(twoThousand));
  });
});
