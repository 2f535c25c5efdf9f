/**
 * The loaded output test as a student does it (leads on the posts, clamp on
 * B+ with its arrow toward the battery, start, 2,000 rpm, pile turned up to
 * about 12 V, read the amps), on a healthy car and with each fault, asserting
 * what the meters read.
 */
import { describe, expect, it } from 'vitest';
import { defaultVehicleParams } from '../../sim/params';
import type { FaultKind } from '../../sim/faults';
import { Bench, outputTest } from './bench';

const RATED_A = defaultVehicleParams().alternator.ratedCurrentA;
// 6 pole pairs, 2,000 engine rpm, 2.8:1 pulley.
const ELECTRICAL_HZ = (6 * 2000 * 2.8) / 60;

/** Output test with a fault present from the start, then the regulated voltage 20 s after the pile is off. */
function withFault(kind: FaultKind, severity01 = 0.5) {
  const { bench, loaded } = outputTest((b) => b.inject(kind, severity01));
  bench.pile(0).wait(20);
  return { bench, loaded, unloaded: bench.read() };
}

describe('the output test', () => {
  it('on a healthy car reads at least 90 % of rating with the battery held near 12 V and little ripple', () => {
    // Check value 5 (ISO 8854/SAE J56; Bosch T1); common practice "within 10 % of rating" (no source); Tomorrow's Technician (< 50–100 mV).
    const { bench, loaded } = outputTest();
    expect(loaded.engine).toBe('running');
    expect(loaded.voltmeterV!).toBeLessThanOrEqual(12.05);
    expect(loaded.clampA!).toBeGreaterThanOrEqual(0.9 * RATED_A);
    expect(loaded.rippleVac!).toBeLessThan(0.1);
    expect(loaded.fusibleLinkOpen).toBe(false);
    bench.pile(0).wait(20);
    const unloaded = bench.read();
    expect(unloaded.voltmeterV!).toBeGreaterThan(13.7);
    expect(unloaded.voltmeterV!).toBeLessThan(14.6);
    expect(unloaded.chargeWarning).toBe(false);
  });

  it('with the fusible link open reads no current on B+, the battery alone feeding the pile, and the lamp lit', () => {
    // OEM: Saturn (a blown link); Mitsubishi 2002 Mirage (open B-to-battery circuit).
    const { loaded, unloaded } = withFault('fusible-link-open');
    expect(Math.abs(loaded.clampA!)).toBeLessThan(1);
    expect(loaded.fusibleLinkOpen).toBe(true);
    expect(unloaded.voltmeterV!).toBeLessThan(12.8);
    expect(unloaded.chargeWarning).toBe(true);
  });

  it('with an open diode reads near-normal amps but heavy ripple at the electrical frequency', () => {
    // US Navy NAVEDTRA 14273 (a dead diode shows in the ripple); Derived: open diode -> ripple at f; check value 12.
    const { loaded } = withFault('diode-open');
    expect(loaded.clampA!).toBeGreaterThan(0.8 * RATED_A);
    expect(loaded.rippleVac!).toBeGreaterThan(0.1);
    expect(loaded.rippleHz! / ELECTRICAL_HZ).toBeCloseTo(1, 1);
  });

  it('with a shorted diode reads well under half the rating and heavy ripple', () => {
    // Memory in trade-facts (output drops sharply with a shorted diode); Tomorrow's Technician (ripple limit).
    const { loaded } = withFault('diode-shorted');
    expect(loaded.clampA!).toBeLessThan(0.45 * RATED_A);
    expect(loaded.rippleVac!).toBeGreaterThan(0.1);
  });

  it('with an open stator phase reads about half to two thirds of rating, ripple at twice the electrical frequency', () => {
    // Derived in trade-facts: one phase open -> V_avg 0.900 V_LL (two thirds of healthy) and ripple at 2f.
    const { loaded } = withFault('stator-phase-open');
    expect(loaded.clampA! / RATED_A).toBeGreaterThan(0.4);
    expect(loaded.clampA! / RATED_A).toBeLessThan(0.7);
    expect(loaded.rippleHz! / ELECTRICAL_HZ).toBeCloseTo(2, 1);
  });

  it('with an open field reads no output, no ripple, and the lamp lit', () => {
    // US Navy NAVEDTRA 14273: an open field stops the ripple.
    const { loaded, unloaded } = withFault('field-open');
    expect(Math.abs(loaded.clampA!)).toBeLessThan(5);
    expect(loaded.rippleVac!).toBeLessThan(0.01);
    expect(unloaded.chargeWarning).toBe(true);
  });

  it('with the regulator set high or low reads normal amps but the wrong regulated voltage', () => {
    // OEM: BMW E38 (13.5–14.5 V band); OEM: Mitsubishi 2018 Attrage (13.7–14.6 V at 20 °C).
    const high = withFault('regulator-set-high');
    expect(high.loaded.clampA!).toBeGreaterThanOrEqual(0.9 * RATED_A);
    expect(high.unloaded.voltmeterV!).toBeGreaterThan(14.8);
    const low = withFault('regulator-set-low');
    expect(low.loaded.clampA!).toBeGreaterThanOrEqual(0.9 * RATED_A);
    expect(low.unloaded.voltmeterV!).toBeLessThan(13.5);
  });

  it('with the regulator stuck at full field climbs above 16 V unloaded, and a minute of it burns the link open', () => {
    // OEM: 1996 Saturn SL1; 1988 GMC S15 (uncontrolled or above 16 V = defective). Severity 1: the field driver
    // shorted full on (lower severities leave part of the duty to the regulator).
    const { loaded } = withFault('regulator-full-field', 1);
    expect(loaded.clampA!).toBeGreaterThanOrEqual(0.9 * RATED_A);
    const b = new Bench().inject('regulator-full-field', 1).leads('battery-pos', 'battery-neg').start().rpm(2000).wait(15);
    const unloaded = b.read();
    expect(unloaded.voltmeterV!).toBeGreaterThan(16);
    // Bounded by the battery's gassing, not the 20 V and more of a battery with no gassing limit (issue seen before this model).
    expect(unloaded.voltmeterV!).toBeLessThan(17);
    expect(unloaded.chargeWarning).toBe(true);
    expect(unloaded.batteryGassing).toBe(true);
    // NAVEDTRA 14273: do not run a full-fielded unit for more than 20 seconds. Held for a minute at 2,000 rpm, the
    // gassing battery takes the unit's full output and the link, rated below it, burns open.
    b.wait(45);
    expect(b.read().fusibleLinkOpen).toBe(true);
    // The stud is then cut off from the battery with the field stuck on: the rectifier's load-dump clamp bounds it.
    const stud = b.point.state.net.nodeV.bplus - b.point.state.net.nodeV.altCase;
    expect(stud).toBeLessThanOrEqual(30 + 1e-9);
  });

  it('with a badly slipping belt reads low amps while the tach shows 2,000 rpm', () => {
    // Common practice, no source: a glazed belt slips under load. Severity 0.95: the grip is below the torque the loaded unit asks at 2,000 rpm (docs/model.md, "Belt").
    const { bench, loaded } = withFault('belt-slip', 0.95);
    expect(loaded.clampA!).toBeLessThan(0.7 * RATED_A);
    expect(Math.abs(loaded.tachRpm - 2000)).toBeLessThan(30);
    expect(bench.point.state.altRpm).toBeGreaterThan(0);
  });

  it('with high resistance on B+ shows a positive-side drop over 1 V under load', () => {
    // OEM: Hyundai 2007 Azera (≤ 0.2 V); excelauto.com (0.01 Ω at 100 A costs 1 V).
    const { bench } = outputTest((b) => b.inject('bplus-high-resistance', 0.5));
    bench.leads('alt-bplus', 'battery-pos').wait(0.05);
    expect(bench.read().voltmeterV!).toBeGreaterThan(1);
  });

  it('with a corroded alternator ground shows a ground-side drop over 0.5 V under load', () => {
    // excelauto.com (ground side ≤ 0.2 V); NAVEDTRA 14273 (≤ 0.1 V per connection).
    const { bench } = outputTest((b) => b.inject('ground-high-resistance', 0.5));
    bench.leads('alt-case', 'battery-neg').wait(0.05);
    expect(Math.abs(bench.read().voltmeterV!)).toBeGreaterThan(0.5);
  });

  it('with a weak battery or a key-off drain reads a normal output (other tests find those)', () => {
    // OEM: Hyundai (the output test needs a partly discharged battery; it does not judge the battery).
    for (const kind of ['battery-weak', 'key-off-draw'] as const) {
      expect(withFault(kind).loaded.clampA!).toBeGreaterThanOrEqual(0.9 * RATED_A);
    }
  });

  it('with a lower-rated unit fitted reads well short of the car’s rating', () => {
    // Common practice "within 10 % of rating" (no source); GM "within 15 A of rating" (1996 Saturn).
    const { loaded } = withFault('wrong-rating', 2 / 3);
    expect(loaded.clampA!).toBeLessThan(RATED_A - 15);
    expect(loaded.clampA!).toBeGreaterThan(0.55 * RATED_A);
  });

  it('with a badly corroded battery post cannot be done: the engine will not crank, and the post drops volts while trying', () => {
    // Common practice, no source: voltage drop across a corroded post clamp while cranking.
    const b = new Bench().inject('post-corroded', 0.5).leads('battery-pos', 'jump-pos').key('start').wait(0.3);
    expect(b.read().voltmeterV!).toBeGreaterThan(1);
    b.wait(2);
    expect(b.read().engine).toBe('stalled');
  });

  it('reads negative amps with the clamp arrow pointing toward the alternator', () => {
    // Common practice, no source: the clamp's sign follows its arrow.
    const { bench } = outputTest();
    bench.clamp('bplus-cable', 'toward-alternator').wait(0.2);
    expect(bench.read().clampA!).toBeLessThan(-0.9 * RATED_A);
  });

  it('held over rating long enough opens the fusible link, and the link stays open', () => {
    // heritech.org: fusible links melt once heated by sustained overload; Kia: keep load bursts within 15 s.
    const b = new Bench().leads('battery-pos', 'battery-neg').clamp(null).wait(0.2).zeroClamp().clamp('bplus-cable');
    b.start().rpm(3000).wait(3).loadTo(12);
    expect(b.read().clampA!).toBeGreaterThan(0.9 * RATED_A);
    b.wait(10);
    expect(b.read().fusibleLinkOpen).toBe(false);
    b.wait(60);
    expect(b.read().fusibleLinkOpen).toBe(true);
    b.pile(0).rpm(0).wait(60);
    const after = b.read();
    expect(after.fusibleLinkOpen).toBe(true);
    expect(Math.abs(after.clampA!)).toBeLessThan(1);
    expect(after.chargeWarning).toBe(true);
  });

  it('a short output test does not trip the pile; holding it for minutes does, until the dial is back at zero and it cools', () => {
    // Kia 2003 Rio: load test within 15 s to protect the tester (carbon-pile heating).
    const { bench, loaded } = outputTest();
    expect(loaded.pileOverheated).toBe(false);
    bench.wait(150);
    expect(bench.read().pileOverheated).toBe(true);
    expect(bench.read().pileA).toBe(0);
    bench.wait(200);
    expect(bench.read().pileOverheated).toBe(true);
    bench.pile(0).wait(400);
    expect(bench.read().pileOverheated).toBe(false);
  });
});
