/**
 * What a real car of these parameters shows under each test, item by item:
 * overcharge bounded by the battery's gassing, an open charging lead that
 * leaves a running alternator, a clamp zero that holds, a belt whose slip
 * grows smoothly, surface charge a short load removes, a series ammeter whose
 * fuse blows, cars that start and deliver their rating, a weak battery and a
 * corroded post that show where the catalogue says. Each check names its
 * source.
 */
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { capacityAs, internalResistanceOhm, openCircuitVoltageV, stepBattery } from '../../sim/battery';
import { VEHICLE_PARAM_BOUNDS, defaultVehicleParams, type VehicleParams } from '../../sim/params';
import { BPLUS_CLAMP_V } from '../../sim/network';
import { REGULATOR_BPLUS_LIMIT_V } from '../../sim/step';
import { crankTrial, deliveredAtRatingA, inductanceForRatingH } from '../../sim/vehicle-checks';
import { rippleTrace } from '../../sim/instruments';
import { RESISTANCE_CCA_RANGE, nameplateCheck } from '../../shared/vehicle-rules';
import { Bench, outputTest } from './bench';

const stud = (b: Bench) => b.point.state.net.nodeV.bplus - b.point.state.net.nodeV.altCase;

/** A constant charge current into the battery alone (a bench charger), returning the highest terminal voltage seen. */
function chargeAt(amps: number, seconds: number, tweak: (p: VehicleParams) => void = () => undefined): number {
  const p = defaultVehicleParams();
  tweak(p);
  const b = p.battery;
  let st = { soc01: b.initialSoc01, fastV: 0, surfaceV: 0, gassingA: 0 };
  const out = { ...st };
  let highest = 0;
  for (let t = 0; t < seconds; t += 0.01) {
    stepBattery(b, st, -amps, internalResistanceOhm(b, st.soc01), capacityAs(b), 0.01, out);
    st = { ...out };
    const v = openCircuitVoltageV(st.soc01, b.tempC, b.sulfation01) + st.fastV + st.surfaceV + amps * internalResistanceOhm(b, st.soc01);
    highest = Math.max(highest, v);
  }
  return highest;
}

describe('overcharge', () => {
  it('holds a healthy battery near full under a 40 A charge for 3 minutes at 15.5 V or less; a sulfated one climbs past it', () => {
    // OEM: Honda Civic 3-minute charge test (40 A: above 15.5 V = replace); OEM Hyundai 1999 TSB (early high voltage = sulfation).
    expect(chargeAt(40, 180, (p) => (p.battery.initialSoc01 = 0.95))).toBeLessThanOrEqual(15.5);
    expect(chargeAt(40, 180, (p) => (p.battery.initialSoc01 = 0.7))).toBeLessThanOrEqual(15.5);
    expect(chargeAt(40, 180, (p) => Object.assign(p.battery, { initialSoc01: 0.7, sulfation01: 0.6, internalResistanceOhmAt25C: 0.02 }))).toBeGreaterThan(15.5);
  });

  it('holds a charged battery near its gassing voltage as charge acceptance falls', () => {
    // Gassing onset about 2.40 V per cell (trade-facts: forum post; Dunlop for Sandia, from memory); overcharge
    // voltage about 2.6-2.7 V per cell at the end of charge (trade-facts, weak sources): 14.4 to 16.2 V.
    const v = chargeAt(20, 600, (p) => (p.battery.initialSoc01 = 1));
    expect(v).toBeGreaterThan(14.4);
    expect(v).toBeLessThan(16.2);
  });

  it('with the regulator stuck at full field shows the high but bounded voltage the trade describes', () => {
    // OEM: 1996 Saturn SL1 (above 16 V = defective); a gassing battery caps it (trade-facts: 15.6-16.2 V at end of charge, weak).
    const b = new Bench().inject('regulator-full-field', 1).leads('battery-pos', 'battery-neg').start().rpm(2000).wait(15);
    expect(b.read().voltmeterV!).toBeGreaterThan(16);
    expect(b.read().voltmeterV!).toBeLessThan(17);
    expect(b.read().batteryGassing).toBe(true);
  });
});

describe('a B+ circuit open between the alternator and the battery', () => {
  for (const when of ['from the start', 'while running'] as const) {
    it(`${when}: the alternator runs, the stud is high with large ripple, and the battery gets no charge`, () => {
      // OEM: Mitsubishi 2003 Lancer Evo, Chrysler 2000 Sebring (about 2 V or more of ripple at B at idle = open
      // B-to-battery circuit, alternator usually fine); OEM Subaru 1997 SVX (lamp lights with B disconnected);
      // OEM Mercury 1997 Grand Marquis (the ignition circuit switches the regulator on).
      const b = new Bench();
      if (when === 'from the start') b.inject('fusible-link-open', 1);
      b.leads('alt-bplus', 'alt-case').start().wait(5);
      if (when === 'while running') b.bplus(false).wait(5);
      const r = b.read();
      expect(r.engine).toBe('running');
      expect(b.point.state.fieldCurrentA).toBeGreaterThan(0.5);
      expect(stud(b)).toBeGreaterThan(16);
      expect(stud(b)).toBeLessThanOrEqual(REGULATOR_BPLUS_LIMIT_V + 0.1);
      // About 2 V or more: the six-pulse ripple of an unsmoothed stud is 13.4 % of the peak line-to-line voltage
      // peak to peak (trade-facts check value 3), about 0.7 V rms here.
      expect(r.rippleVac!).toBeGreaterThan(0.5);
      const trace = rippleTrace(b.params, b.point.state, 240)!;
      expect(Math.max(...trace.acV) - Math.min(...trace.acV)).toBeGreaterThan(2);
      expect(b.point.state.net.branchA.battery).toBeGreaterThan(0);
      expect(r.chargeWarning).toBe(true);
      // Nothing at the battery: no charge current, no ripple.
      b.leads('battery-pos', 'battery-neg').wait(0.1);
      expect(b.read().rippleVac!).toBeLessThan(0.01);
    });
  }

  it('builds up through the charge-lamp circuit on a unit that feeds its field from B+, and holds its own stud', () => {
    // OEM: Subaru 1998 Forester, Nissan 2000 Altima (the lamp / I circuit excites the regulator). A unit that senses
    // its own B+ regulates the stud it can see (common practice, no source); the battery still gets nothing.
    const p = defaultVehicleParams();
    p.regulator.sense = 'bplus';
    const b = new Bench(p).inject('fusible-link-open', 1).leads('alt-bplus', 'alt-case').start().wait(8);
    expect(Math.abs(stud(b) - b.point.state.regulatorSetPointV)).toBeLessThan(0.5);
    expect(b.read().rippleVac!).toBeGreaterThan(0.3);
    expect(b.point.state.net.branchA.battery).toBeGreaterThan(0);
  });

  it('never drives the stud past what its sources can, even with the field stuck on', () => {
    // The bridge's ceiling is the peak line-to-line EMF (CRC handbook 22.2.5); the avalanche clamp bounds a load dump
    // ("Load dump", after Borgeest; the 30 V is from memory).
    const b = new Bench().inject('regulator-full-field', 1).inject('fusible-link-open', 1).leads('alt-bplus', 'alt-case').start().rpm(3500).wait(10);
    expect(stud(b)).toBeLessThanOrEqual(BPLUS_CLAMP_V + 1e-9);
    expect(stud(b)).toBeGreaterThan(REGULATOR_BPLUS_LIMIT_V);
  });
});

describe('the clamp zero', () => {
  it('zeroed with the jaws closed in air, holds on the conductor: a 25 mA sleeping draw reads within 0.1 A', () => {
    // Common practice, no source: zero a hall clamp away from the conductor before reading.
    for (const seed of [1, 2, 3, 4, 5, 6]) {
      const b = new Bench(defaultVehicleParams(), seed).clamp(null).wait(0.2).zeroClamp().wait(0.1);
      b.clamp('battery-neg-cable', 'toward-battery').wait(200);
      expect(Math.abs(b.read().clampA! - b.point.state.net.branchA.negCable)).toBeLessThanOrEqual(0.1);
    }
  });

  it('reads the output within 0.5 A of the current in the B+ cable after a zero in air', () => {
    const { bench, loaded } = outputTest();
    expect(Math.abs(loaded.clampA! - bench.point.state.net.branchA.bplusCable)).toBeLessThanOrEqual(0.5);
  });
});

describe('a slipping belt', () => {
  const output = (severity: number, idleFirst: boolean) => {
    const b = new Bench().inject('belt-slip', severity).leads('battery-pos', 'battery-neg').clamp(null).wait(0.2).zeroClamp().clamp('bplus-cable', 'toward-battery');
    b.start();
    if (idleFirst) b.accessory('headlamps', true).accessory('blower', true).accessory('rear-defrost', true).wait(5).accessory('headlamps', false).accessory('blower', false).accessory('rear-defrost', false).wait(3);
    b.rpm(2000).wait(45);
    const unloaded = b.point.state.beltSlip01;
    b.loadTo(12);
    return { amps: b.read().clampA!, slip: b.point.state.beltSlip01, unloaded, tach: b.read().tachRpm };
  };

  it('slips more under load as the severity grows, smoothly, with the output short of rating once worn through', () => {
    // Common practice, no source (a glazed or loose belt slips under load with a normal tach); trade-facts: OEM
    // VW Golf (low tension, weak drive), Suzuki (lamp on with a worn belt).
    const runs = [0, 0.2, 0.4, 0.6, 0.8].map((s) => output(s, false));
    for (let i = 1; i < runs.length; i++) expect(runs[i]!.slip).toBeGreaterThan(runs[i - 1]!.slip);
    for (const r of runs) expect(r.slip).toBeLessThan(0.2);
    const worn = output(1, false);
    expect(worn.amps).toBeLessThan(0.5 * 150);
    expect(Math.abs(worn.tach - 2000)).toBeLessThan(30);
  });

  it('gives the same output reading whether or not it slid under a heavy load at idle first', () => {
    // The slip law has no memory (docs/model.md, "Belt"); common practice: retest gives the same reading.
    // Within 1 %: the battery's state after the extra seconds at idle differs a little, the belt does not.
    for (const s of [0.4, 0.9]) {
      const a = output(s, true).amps;
      const b = output(s, false).amps;
      expect(Math.abs(a - b)).toBeLessThanOrEqual(0.01 * b);
    }
  });

  it('runs at belt speed once the battery’s recharge after the start is over, even when badly worn', () => {
    for (const s of [0.5, 0.7, 0.9]) expect(output(s, false).unloaded).toBeLessThan(0.05);
  });
});

describe('surface charge', () => {
  it('after a drive, a load of about 15 A for a minute brings the resting voltage within 0.05 V of the open-circuit table', () => {
    // OEM: Hyundai Elantra / i30 (lamps, blower, defogger for 60 s, then 12.5-12.9 V); BCI table (check value 9).
    const b = new Bench().leads('battery-pos', 'battery-neg').start().rpm(2000).wait(300).rpm(0).wait(5).key('off').wait(60);
    expect(b.read().voltmeterV!).toBeGreaterThan(openCircuitVoltageV(b.point.state.batterySoc01, 25) + 0.2);
    b.accessory('headlamps', true).wait(0.1);
    // Headlamps work with the key off; the pile adds the rest of the 15 A.
    b.pile(0.2).wait(60).pile(0).accessory('headlamps', false).wait(60);
    expect(Math.abs(b.read().voltmeterV! - openCircuitVoltageV(b.point.state.batterySoc01, 25))).toBeLessThanOrEqual(0.05);
  });

  it('after a drive, fades at rest over hours, not minutes', () => {
    // Rest instead: 2 h or more (Peugeot 207, Kia 2003 Sedona: > 12.5 V after 2 h); US Army TM 9-6115-730-24 (3-8 h).
    const b = new Bench().leads('battery-pos', 'battery-neg').start().rpm(2000).wait(300).rpm(0).wait(5).key('off').wait(600);
    const ocv = () => openCircuitVoltageV(b.point.state.batterySoc01, 25);
    expect(b.read().voltmeterV! - ocv()).toBeGreaterThan(0.1);
    b.wait(2 * 3600);
    expect(Math.abs(b.read().voltmeterV! - ocv())).toBeLessThanOrEqual(0.05);
  });
});

describe('the series ammeter', () => {
  it('blows its fuse with the key on or when cranking, stays blown until a new fuse is fitted, and says so', () => {
    // OEM: Mercury 2001 Cougar (no cranking or loads over 10 A with the meter in series: its fuse); GM 1988
    // bulletin (no ACC/RUN/START with the ammeter in series).
    const b = new Bench().ammeter(true).wait(1);
    b.key('start').wait(2);
    const r = b.read();
    expect(r.ammeterFuseBlown).toBe(true);
    expect(r.ammeterA).toBe(0);
    expect(r.engine).toBe('stalled');
    expect(r.engineStopCause).toBe('starter-circuit-open');
    b.key('off').wait(1).ammeter(false).wait(1).ammeter(true).wait(1);
    expect(b.read().ammeterFuseBlown).toBe(true);
    b.replaceAmmeterFuse();
    b.wait(b.params.loads.moduleSleepDelayS + 10);
    expect(b.read().ammeterFuseBlown).toBe(false);
    expect(b.read().ammeterA!).toBeCloseTo(b.params.loads.keyOffSleepA, 2);
  });

  it('over its 10 A range, says so before the fuse goes', () => {
    const b = new Bench().ammeter(true).wait(0.5).key('on').wait(0.1);
    expect(b.read().ammeterOverRange).toBe(true);
  });
});

describe('cars inside the editor’s bounds', () => {
  const paths = Object.keys(VEHICLE_PARAM_BOUNDS) as (keyof typeof VEHICLE_PARAM_BOUNDS)[];
  /** Every number in its range; the battery's resistance in the range its CCA allows; a battery in service (charged, at -18 °C or warmer, up to 4 years old), the machine sized for its rating. */
  const carArb = fc.array(fc.double({ min: 0, max: 1, noNaN: true }), { minLength: paths.length + 4, maxLength: paths.length + 4 }).map((u) => {
    const q = defaultVehicleParams() as unknown as Record<string, Record<string, number> | number>;
    paths.forEach((path, i) => {
      const b = VEHICLE_PARAM_BOUNDS[path];
      const v = b.integer ? Math.round(b.min + (b.max - b.min) * u[i]!) : b.min + (b.max - b.min) * u[i]!;
      const [group, key] = path.split('.') as [string, string | undefined];
      if (key === undefined) q[group] = v;
      else (q[group] as Record<string, number>)[key] = v;
    });
    const p = q as unknown as VehicleParams;
    const extra = u.slice(paths.length);
    const r = RESISTANCE_CCA_RANGE;
    Object.assign(p.battery, {
      internalResistanceOhmAt25C: (r.min + (r.max - r.min) * extra[0]!) / p.battery.cca,
      initialSoc01: 0.75 + 0.25 * extra[1]!,
      tempC: -18 + 73 * extra[2]!,
      ageYears: 4 * extra[3]!,
      sulfation01: 0,
      initialSurfaceChargeV: 0,
    });
    // Fault-only fields of a healthy car.
    Object.assign(p.alternator, { brushResistanceOhm: 0.1, keyOffLeakageA: 0 });
    Object.assign(p.regulator, { dutyFloor01: 0 });
    Object.assign(p.wiring, { senseLineOhm: 0.05, bplusExtraOhm: 0, groundExtraOhm: 0, postClampPosOhm: 0.0001, postClampNegOhm: 0.0001 });
    Object.assign(p.loads, { stuckDrawA: 0 });
    return p;
  });

  const COLD_START_CARS = 300;
  it(`start when their design passes the editor’s cold-start rule and their battery is in service (${COLD_START_CARS} cars)`, () => {
    // The CCA rating's temperature, -18 °C (OEM GM 1999 Chevrolet Prizm); shared/vehicle-rules.ts.
    let checked = 0;
    fc.assert(
      fc.property(carArb, (p) => {
        const cold = crankTrial({ ...p, battery: { ...p.battery, tempC: -18, initialSoc01: 1, ageYears: 0 } });
        fc.pre(cold.started);
        checked++;
        return crankTrial(p).started;
      }),
      { numRuns: COLD_START_CARS },
    );
    // More than a third of the planned cars pass the cold-start rule, so the property is not checked on a few.
    expect(checked).toBeGreaterThan(COLD_START_CARS / 3);
  });

  it('deliver their nameplate within 15 % once the stator is sized for it, as the editor shows', () => {
    // SAE J56: the rating at the rating's speed, cold, 13.5 V.
    const b = VEHICLE_PARAM_BOUNDS['alternator.synchronousInductanceH'];
    fc.assert(
      fc.property(carArb, (p) => {
        const h = inductanceForRatingH(p, b.min, b.max);
        fc.pre(h !== null);
        const sized = { ...p, alternator: { ...p.alternator, synchronousInductanceH: h! } };
        return Math.abs(deliveredAtRatingA(sized) / p.alternator.ratedCurrentA - 1) <= 0.01 && nameplateCheck(sized).ok;
      }),
      { numRuns: 60 },
    );
  });

  it('never read more output with a resistive B+ connection than without (the field is fed from the battery side)', () => {
    // excelauto.com (0.01 Ω at 100 A costs 1 V): resistance in the charging path costs, it never adds.
    const healthy = outputTest().loaded.clampA!;
    for (const s of [0.1, 0.2, 0.4, 0.6]) {
      const { loaded } = outputTest((b) => b.inject('bplus-high-resistance', s));
      expect(loaded.clampA!).toBeLessThanOrEqual(healthy + 0.1);
      expect(loaded.clampA!).toBeLessThanOrEqual(1.02 * 150);
    }
  });
});

describe('a weak battery and a corroded post', () => {
  it('a sulfated battery fails the half-CCA load test at every severity and rests low at the library severity', () => {
    // OEM: Kia / GM load test (9.6 V at 21 °C); VW 2015 Jetta, Peugeot 207 (a sulfated battery will not take charge).
    for (const s of [0, 0.3, 0.7, 1]) {
      const b = new Bench().inject('battery-weak', s).leads('battery-pos', 'battery-neg').wait(1).pile(0.6).wait(15);
      expect(b.read().voltmeterV!, `severity ${s}`).toBeLessThan(9.6);
    }
    const rested = new Bench().inject('battery-weak', 0.7).leads('battery-pos', 'battery-neg').wait(60);
    expect(rested.read().voltmeterV!).toBeLessThan(12.4);
  });

  it('a corroded post drops volts across the post under load, and at library severity the car still starts', () => {
    // trade-facts: NAVEDTRA 14273 (0.1 V per connection); OEM Hyundai 2017 Azera (positive side ≤ 0.2 V at 20 A).
    const trial = crankTrial(defaultVehicleParams(), [{ id: 'p', kind: 'post-corroded', severity01: 0.12, onsetS: 0 }]);
    expect(trial.started).toBe(true);
    const b = new Bench().inject('post-corroded', 0.12).leads('battery-pos', 'jump-pos').start().rpm(2000).wait(45).pile(0.16).wait(1);
    expect(Math.abs(b.read().voltmeterV!)).toBeGreaterThan(0.1);
    const worse = crankTrial(defaultVehicleParams(), [{ id: 'p', kind: 'post-corroded', severity01: 0.5, onsetS: 0 }]);
    expect(worse.started).toBe(false);
    expect(worse.cause).toBe('starter-voltage-low');
  });
});
