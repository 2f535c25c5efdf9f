/**
 * The instruments as a technician reads them, and the alternator's output
 * curve against published characteristics.
 */
import { describe, expect, it } from 'vitest';
import { defaultVehicleParams } from '../../sim/params';
import { outputCurve, rippleTrace } from '../../sim/instruments';
import { faultChange } from '../../sim/faults';
import { Bench, outputTest } from './bench';

const RATED_A = defaultVehicleParams().alternator.ratedCurrentA;
const at = (curve: { altRpm: number; currentA: number }[], rpm: number) => {
  const p = curve.find((x) => x.altRpm === rpm);
  if (!p) throw new Error(`no point at ${rpm}`);
  return p.currentA;
};

describe('the electrical frequency and ripple frequency', () => {
  it('are p × N / 60 and six times that: 560 Hz and 3,360 Hz at 2,000 engine rpm on 2.8:1 with 6 pole pairs (±1 %)', () => {
    // US Navy NEETS, Generators and Motors; Flinn §3.5 (f = p·N/60); Hart (6 pulses per cycle).
    const b = new Bench().leads('battery-pos', 'battery-neg').start().rpm(2000).wait(4).accessory('headlamps', true).wait(1);
    const hz = b.read().rippleHz;
    expect(hz).not.toBeNull();
    expect(hz!).toBeGreaterThan(3360 * 0.99);
    expect(hz!).toBeLessThan(3360 * 1.01);
    const trace = rippleTrace(b.params, b.point.state, 180);
    expect(trace).not.toBeNull();
    expect(trace!.electricalHz).toBeGreaterThan(560 * 0.99);
    expect(trace!.electricalHz).toBeLessThan(560 * 1.01);
  });
});

describe('the output curve of the invented 150 A unit', () => {
  const cold = outputCurve(defaultVehicleParams(), [], { hot: false });
  const hot = outputCurve(defaultVehicleParams(), [], { hot: true });

  it('is zero below about 1,000 alternator rpm', () => {
    // B. Nuckolls, Understanding Alternators (AeroElectric): no output until the unit can reach the set point (~1,000 rpm); Bosch zero-ampere speed ~1,000 (Memory).
    for (const rpm of [0, 300, 600, 800]) expect(at(cold, rpm)).toBe(0);
    expect(at(cold, 1000)).toBeLessThan(0.1 * RATED_A);
  });

  it('gives 50–70 % of rating at 1,500 and at 1,800 alternator rpm', () => {
    // Bosch T1 (54 % at 1,500 rpm); Westerbeke 33A data (48 % at 1,300 rpm); Bosch 40/70 A naming (57 % at 1,800, Memory).
    for (const rpm of [1500, 1800]) {
      expect(at(cold, rpm) / RATED_A).toBeGreaterThanOrEqual(0.5);
      expect(at(cold, rpm) / RATED_A).toBeLessThanOrEqual(0.7);
    }
  });

  it('gives at least 90 % of rating at 5,600 rpm at 13.5 V, cold, and flattens near rating at high speed', () => {
    // ISO 8854 / SAE J56 rating at 13.5 V; Bosch T1 97 % at 6,000 rpm; AeroElectric: flattens near 5,500 rpm.
    expect(at(cold, 5600)).toBeGreaterThanOrEqual(0.9 * RATED_A);
    expect(at(cold, 12000)).toBeLessThan(1.15 * RATED_A);
    expect(at(cold, 12000) - at(cold, 6000)).toBeLessThan(0.05 * RATED_A);
  });

  it('never falls as speed rises', () => {
    // Check value 6 (AeroElectric; machine theory: output levels off as stator reactance rises).
    for (let i = 1; i < cold.length; i++) expect(cold[i]!.currentA).toBeGreaterThanOrEqual(cold[i - 1]!.currentA - 1e-9);
  });

  it('hot is 65–90 % of cold at the same speed', () => {
    // Westerbeke 33A technical data: 67 % at 1,300 rpm, 82 % at 2,500 rpm; OEM Hyundai: rated output may not be reached hot.
    for (const rpm of [1800, 2500, 5000, 8000]) {
      const ratio = at(hot, rpm) / at(cold, rpm);
      expect(ratio).toBeGreaterThanOrEqual(0.65);
      expect(ratio).toBeLessThanOrEqual(0.9);
    }
  });

  it('drops when a lower-rated unit is fitted', () => {
    // Wrong-rating fault (common practice, no source): the fitted unit's own curve.
    const small = outputCurve(defaultVehicleParams(), [faultChange({ id: 'w', kind: 'wrong-rating', severity01: 2 / 3, onsetS: 0 })], { hot: false });
    expect(at(small, 6000)).toBeLessThan(0.75 * at(cold, 6000));
  });
});

describe('the meters', () => {
  it('read at least 90 % of rating on the B+ cable at 2,000 engine rpm with the pile pulling the battery to about 12 V, cold', () => {
    // Check value 5 (ISO 8854/SAE J56; Bosch T1); GM practice: carbon pile across battery, 2,000 rpm (1996 Saturn).
    const { loaded } = outputTest();
    expect(loaded.voltmeterV!).toBeGreaterThan(11.6);
    expect(loaded.voltmeterV!).toBeLessThanOrEqual(12.05);
    expect(loaded.clampA!).toBeGreaterThanOrEqual(0.9 * RATED_A);
  });

  it('read negative volts with the leads reversed', () => {
    // Common practice, no source: a DMM shows the sign of red minus black.
    const b = new Bench().leads('battery-neg', 'battery-pos').wait(0.1);
    expect(b.read().voltmeterV!).toBeLessThan(-12);
  });

  it('read nothing with a lead unclipped, and nothing on an empty clamp', () => {
    const b = new Bench().leads('battery-pos', null).wait(0.1);
    expect(b.read().voltmeterV).toBeNull();
    expect(b.read().rippleVac).toBeNull();
    expect(b.read().clampA).toBeNull();
    expect(b.read().ammeterA).toBeNull();
  });

  it('read the clamp negative with its arrow pointing the wrong way', () => {
    // Common practice, no source: an inductive clamp reads the current along its arrow.
    const { bench } = outputTest();
    bench.pile(0.6).wait(1);
    const forward = bench.read().clampA!;
    bench.clamp('bplus-cable', 'toward-alternator').wait(0.2);
    const reversed = bench.read().clampA!;
    expect(forward).toBeGreaterThan(50);
    expect(reversed).toBeLessThan(-50);
    expect(Math.abs(forward + reversed)).toBeLessThan(5);
  });

  it('zeroing the clamp in air removes its offset; zeroing it on a live cable subtracts the current', () => {
    // Common practice, no source: zero an inductive clamp away from the conductor.
    const b = new Bench().clamp(null).wait(0.1).zeroClamp().wait(0.05).clamp('battery-neg-cable').wait(0.2);
    expect(Math.abs(b.read().clampA!)).toBeLessThan(2.5); // key-off draw plus the new jaw offset
  });
});
