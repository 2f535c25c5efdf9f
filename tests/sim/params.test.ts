/**
 * The vehicle parameters: the invented default car and the editor's bounds.
 */
import { describe, expect, it } from 'vitest';
import { VEHICLE_PARAM_BOUNDS, copperResistanceOhm, defaultVehicleParams } from '../../sim/params';
import { PARAM_LABELS } from '../../shared/param-labels.ts';
import type { NumericParamPath } from '../../sim/params';

function valueAt(path: NumericParamPath): unknown {
  const p = defaultVehicleParams() as unknown as Record<string, Record<string, unknown> | unknown>;
  const [group, key] = path.split('.') as [string, string | undefined];
  return key === undefined ? p[group] : (p[group] as Record<string, unknown>)[key];
}

describe('the default vehicle', () => {
  it('is the invented midsize car of the brief: 150 A on 2.8:1, 600 CCA 60 Ah', () => {
    const p = defaultVehicleParams();
    expect(p.alternator.ratedCurrentA).toBe(150);
    expect(p.belt.pulleyRatio).toBe(2.8);
    expect(p.battery.cca).toBe(600);
    expect(p.battery.capacityAh).toBe(60);
  });

  it('has every numeric parameter inside the bounds the scenario editor shows', () => {
    for (const [path, bound] of Object.entries(VEHICLE_PARAM_BOUNDS) as [NumericParamPath, (typeof VEHICLE_PARAM_BOUNDS)[NumericParamPath]][]) {
      const v = valueAt(path);
      expect(typeof v, path).toBe('number');
      expect(v as number, path).toBeGreaterThanOrEqual(bound.min);
      expect(v as number, path).toBeLessThanOrEqual(bound.max);
      if (bound.integer) expect(Number.isInteger(v), path).toBe(true);
      expect(PARAM_LABELS[path].length, path).toBeGreaterThan(3);
    }
  });

  it('is returned fresh each time, so editing one copy never changes another', () => {
    const a = defaultVehicleParams();
    a.loads.accessories.push({ id: 'x', label: 'x', currentA: 1 });
    expect(defaultVehicleParams().loads.accessories.some((acc) => acc.id === 'x')).toBe(false);
  });
});

describe('copper resistance', () => {
  it('follows the AWG table: 0.513 mΩ/m for 2 AWG, 20.9 mΩ/m for 18 AWG', () => {
    // HyperPhysics wire-gauge table (after Floyd, Electric Circuit Fundamentals).
    expect(copperResistanceOhm(2, 1)).toBeCloseTo(0.000513, 7);
    expect(copperResistanceOhm(18, 2)).toBeCloseTo(0.0418, 5);
  });
});
