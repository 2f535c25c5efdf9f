/**
 * The car's wiring: voltage drops and Kirchhoff's current law.
 */
import { describe, expect, it } from 'vitest';
import { copperResistanceOhm } from '../../sim/params';
import { kclResidualsA } from '../../sim/network';
import { Bench } from './bench';

/** Positive-side drop (B+ stud to battery +) and the B+ current, at 2,500 rpm with the pile set. */
function positiveDrop(setup: (b: Bench) => void, dial01: number): { dropV: number; currentA: number } {
  const b = new Bench();
  setup(b);
  b.clamp(null).wait(0.1).zeroClamp().clamp('bplus-cable', 'toward-battery');
  b.leads('alt-bplus', 'battery-pos').start().rpm(2500).wait(3).pile(dial01).wait(2);
  return { dropV: b.read().voltmeterV!, currentA: b.read().clampA! };
}

describe('the wiring', () => {
  it('1 m of 4 AWG copper drops 0.08 V at 100 A', () => {
    // HyperPhysics wire-gauge table (after Floyd), 0.815 mΩ/m; check value 11.
    expect(copperResistanceOhm(4, 1) * 100).toBeCloseTo(0.0815, 4);
  });

  it('drops no more than 0.2 V on each side of a healthy charging circuit at 30 A or more', () => {
    // OEM: Hyundai 2007 Azera, 2009 Elantra Touring (≤ 0.2 V, loads on, ~2,500 rpm); excelauto.com ground side ≤ 0.2 V.
    const b = new Bench().clamp(null).wait(0.1).zeroClamp().clamp('bplus-cable', 'toward-battery');
    // After the battery has taken back the charge used to start, with lamps and blower on.
    b.start().rpm(2500).accessory('headlamps', true).accessory('blower', true).wait(90);
    const amps = b.read().clampA!;
    b.leads('alt-bplus', 'battery-pos').wait(0.05);
    const positive = b.read().voltmeterV!;
    b.leads('alt-case', 'battery-neg').wait(0.05);
    const ground = b.read().voltmeterV!;
    expect(amps).toBeGreaterThanOrEqual(30);
    expect(Math.abs(positive)).toBeLessThanOrEqual(0.2);
    expect(Math.abs(ground)).toBeLessThanOrEqual(0.2);
  });

  it('an extra 0.01 Ω in the B+ circuit adds 1.0 ± 0.05 V of drop per 100 A', () => {
    // excelauto.com "Alternator Voltage Drop Test": 0.01 Ω at 100 A costs 1 V; check value 11.
    const healthy = positiveDrop(() => undefined, 0.5);
    const faulty = positiveDrop((b) => b.inject('bplus-high-resistance', 0.2), 0.5);
    expect(faulty.currentA).toBeGreaterThan(80);
    const addedPer100A = (faulty.dropV / faulty.currentA - healthy.dropV / healthy.currentA) * 100;
    expect(addedPer100A).toBeGreaterThan(0.95);
    expect(addedPer100A).toBeLessThan(1.05);
  });

  it('shows a corroded alternator ground as a ground-side drop, not a positive-side one', () => {
    // excelauto.com ground side ≤ 0.2 V; NAVEDTRA 14273 ≤ 0.1 V per connection.
    const b = new Bench().inject('ground-high-resistance', 0.5).start().rpm(2500).wait(3).pile(0.5).wait(2);
    b.leads('alt-case', 'battery-neg').wait(0.05);
    expect(Math.abs(b.read().voltmeterV!)).toBeGreaterThan(0.5);
    b.leads('alt-bplus', 'battery-pos').wait(0.05);
    expect(Math.abs(b.read().voltmeterV!)).toBeLessThan(0.5);
  });

  it('keeps the sum of currents at every node at zero through a start and a load sweep', () => {
    // Kirchhoff's current law (common practice, no source).
    const b = new Bench().key('start');
    for (let i = 0; i < 200; i++) {
      if (i === 20) b.key('on').rpm(2500);
      if (i > 60) b.pile((i - 60) / 140);
      b.wait(0.05);
      for (const r of Object.values(kclResidualsA(b.point.state.net))) expect(Math.abs(r)).toBeLessThan(1e-6);
    }
  });
});
