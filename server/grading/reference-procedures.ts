/**
 * Reference procedures: each diagnostic test run on the model the way the
 * trade's sources run it, giving the value a careful student reads and the
 * verdict under the scenario's pass rules. Grading takes the right verdict of
 * each test from here, so the key is what the car shows, not what a fault is
 * expected to show.
 *
 * Every procedure sets the conditions its source sets (the load or current it
 * names, the engine speed, the time to settle) and judges against the limit
 * that source gives for those conditions; each constant below names its
 * source. Each test is its own run from the start of the attempt with the
 * scenario's faults present in full (onsets and intermittent patterns aside:
 * the reference describes the car with its faults in place). A running test
 * on a car that does not start cannot be done: it is reported as not
 * runnable, and a scenario may not expect it (shared/scenario.ts).
 *
 * Pure and deterministic: the same definition always gives the same
 * measurements. Units are in the names: V, Vac (rms), A, rpm, s, ms, C.
 */
import type { DiagnosticTest, Fault } from '../../sim/faults.ts';
import type { VehicleParams } from '../../sim/params.ts';
import { ScriptedBench } from '../../sim/scripted-bench.ts';
import { DISPLAY_TICK_MS } from '../../shared/meter-display.ts';
import { DIAGNOSTIC_TESTS, RUNNING_TESTS, outputPassMarkA, type PassRules, type ScenarioDefinition } from '../../shared/scenario.ts';

export interface ReferenceMeasurement {
  value: number;
  unit: 'V' | 'V AC' | 'A';
  pass: boolean;
  /**
   * How far the value sits inside (positive) or outside (negative) the pass
   * band, in the value's unit; a car that does not start fails the cranking
   * test outright (negative infinity).
   */
  marginToLimit: number;
  /** False when the test cannot be done on this car (a running test on a car that does not start). */
  runnable: boolean;
  /** How the reading was taken, in the words of the procedure. */
  conditions: string;
}

export type ReferenceMeasurements = Record<DiagnosticTest, ReferenceMeasurement>;

export { RUNNING_TESTS };

/** Seed of every reference run (the clamp is zeroed in air, so the seed only moves the tach flicker and the clamp's small reseat shift). */
export const REFERENCE_SEED = 1;
/** Engine speed the assistant holds for the regulated-voltage, output and voltage-drop tests (OEM: GM 1996 Saturn, 2,000 rpm). */
export const TEST_RPM = 2000;
/** Idle after the start before the speed is raised. */
const AFTER_START_IDLE_S = 5;

/**
 * State of charge: surface charge removed first by a load of about 15 A for a
 * minute (OEM: Hyundai Elantra / i30, lamps, blower and defogger for 60 s),
 * then a short rest for the voltage to come back (Kia 2003 Rio: wait up to
 * 5 min; Chrysler: 2 min), leads on the posts.
 */
export const SURFACE_CHARGE_LOAD_A = 15;
export const SURFACE_CHARGE_LOAD_S = 60;
export const OCV_REST_S = 120;

/** The battery load test: half the CCA for 15 s (OEM: Kia Amanti, GM), after removing surface charge (300 A for 15 s, then 15 s: GM 2011 Spark). */
export const LOAD_TEST_S = 15;
const SURFACE_CHARGE_BURST_A = 300;
const SURFACE_CHARGE_BURST_S = 15;
const LOAD_TEST_WAIT_S = 15;

/**
 * Lowest voltage after 15 s at half the CCA, by battery temperature (OEM: GM /
 * Suzuki and Kia / Hyundai tables in trade-facts: 9.6 V at 21 C down to 8.5 V
 * at -18 C). The scenario's rule is the 21 C figure; the table's offsets
 * carry it to the battery's temperature.
 */
const LOAD_TEST_TABLE: readonly (readonly [tempC: number, minV: number])[] = [
  [-18, 8.5],
  [-12, 8.7],
  [-7, 8.9],
  [-1, 9.1],
  [4, 9.3],
  [10, 9.4],
  [16, 9.5],
  [21, 9.6],
];

/** The load-test minimum at a battery temperature, for a rule given at 21 C. */
export function loadTestMinimumV(ruleAt21C: number, tempC: number): number {
  const t = LOAD_TEST_TABLE;
  let v: number;
  if (tempC >= t[t.length - 1]![0]) v = t[t.length - 1]![1];
  else if (tempC < t[0]![0]) v = 8.0; // below -18 C: GM / Suzuki 8.0 V
  else {
    let i = 0;
    while (t[i + 1]![0] <= tempC) i++;
    const [t0, v0] = t[i]!;
    const [t1, v1] = t[i + 1]!;
    v = v0 + ((v1 - v0) * (tempC - t0)) / (t1 - t0);
  }
  return ruleAt21C + (v - 9.6);
}

/** Regulated voltage: engine at 2,000 rpm, accessories off, read once it has settled (OEM: BMW E38, 13.5-14.5 V). */
export const REGULATED_SETTLE_S = 15;

/**
 * Voltage drops: a load of 20 A on at about 2,000 rpm, then the drop read
 * across each side (OEM: Hyundai 2017 Azera, <= 0.2 V on the positive side
 * with the loads set for 20 A; toyotaguru / autodtcs, <= 0.2 V on the ground
 * side at about 2,000 rpm). The 20 A is the carbon pile on the posts, so it
 * flows from B+ through the charging cable, the junction, the battery cable
 * and the post connection, every joint the positive-side test judges; read
 * once the battery's recharge after the start has died away.
 */
export const DROP_TEST_A = 20;
/** Time from the start before a drop or ripple reading: the recharge after the crank is over by then. */
export const SETTLED_AFTER_START_S = 45;

/**
 * Ripple: AC volts at the battery posts with the unit working hard, 50-100 mV
 * at most (Tomorrow's Technician: replace above 50 mV, some cars allow
 * 100 mV; trade-facts check value 12: healthy < 0.1 V at 2,000 rpm with loads
 * on, a failed diode above it at high load). A failed diode or winding is
 * easiest to see at high output (OEM: Mitsubishi 2012 Eclipse, oscilloscope
 * check), so the pile is set until the alternator gives half its rating.
 */
export const RIPPLE_RPM = 2000;
export const RIPPLE_LOAD_SHARE = 0.5;
/** Battery discharge above which the alternator is giving all it can (the battery supplies the rest). */
export const ALTERNATOR_AT_LIMIT_BATTERY_A = 1;

/** Key-off draw: read once the modules have slept (OEM: Ford 2023 Edge, 25-50 mA after they sleep). */
export const DRAW_MARGIN_S = 10;

/** Cranking: leads on the posts, crank until the engine fires; the lowest voltage while cranking (common practice, no source: 9.6 V). */
export const CRANK_MAX_S = 5;
export const CRANKING_MIN_V = 9.6;

/** The scripted bench of a reference run: the scenario's faults in the log from the start, the reference seed, every wait at least one step. */
class Script extends ScriptedBench {
  constructor(params: VehicleParams, faults: readonly Fault[]) {
    super(params, {
      seed: REFERENCE_SEED,
      events: faults.map((f, i) => ({ kind: 'fault-inject', atMs: 0, fault: { ...f, id: f.id || `fault-${i}`, onsetS: 0, intermittent: null } })),
      atLeastOneStep: true,
    });
  }

  /** Crank until the engine fires (or for `CRANK_MAX_S`), release, and return the lowest voltmeter reading seen on the display ticks. */
  start(): { lowestV: number | null; started: boolean } {
    this.key('start');
    let lowestV: number | null = null;
    for (let t = 0; t < CRANK_MAX_S * 1000; t += DISPLAY_TICK_MS) {
      this.wait(DISPLAY_TICK_MS / 1000);
      const status = this.point.state.engineStatus;
      const v = this.read().voltmeterV;
      if (status === 'cranking' && v !== null && (lowestV === null || v < lowestV)) lowestV = v;
      if (status === 'running' || status === 'stalled') break;
    }
    const started = this.point.state.engineStatus === 'running';
    this.key(started ? 'on' : 'off').wait(0.2);
    return { lowestV, started };
  }

  /** Set the pile so it draws about `targetA`, correcting the dial a few times. */
  pileCurrent(targetA: number, maxAAt12V: number): void {
    let dial = Math.min(1, Math.sqrt(targetA / maxAAt12V));
    for (let i = 0; i < 4; i++) {
      this.pile(dial).wait(0.2);
      const a = this.read().pileA;
      if (!(a > 0)) break;
      dial = Math.min(1, dial * Math.sqrt(targetA / a));
    }
    this.pile(dial);
  }

  /**
   * Turn the pile until the clamp (zeroed, on B+) reads about `targetA` from
   * the alternator, or until the battery starts to supply the rest (the
   * alternator then gives all it can).
   */
  alternatorCurrent(targetA: number): void {
    let dial = 0;
    for (let i = 0; i < 100; i++) {
      const a = this.read().clampA ?? 0;
      if (a >= targetA) break;
      // Each turn of the dial draws on the battery until the regulator answers: only a discharge that lasts means the limit.
      if (this.point.state.net.branchA.battery > ALTERNATOR_AT_LIMIT_BATTERY_A && this.wait(1).point.state.net.branchA.battery > ALTERNATOR_AT_LIMIT_BATTERY_A) break;
      dial = Math.min(1, dial + 0.01);
      this.pile(dial).wait(0.2);
    }
  }

  /** Zero the clamp in air, then close it on the B+ cable with its arrow toward the battery. */
  clampOnBplus(): this {
    return this.clamp(null).wait(0.2).zeroClamp().wait(0.1).clamp('bplus-cable', 'toward-battery');
  }
}

const fmtV = (x: number | null, d = 2) => (x === null ? 'no reading' : `${x.toFixed(d)} V`);
const fmtA = (x: number | null) => (x === null ? 'no reading' : `${x.toFixed(1)} A`);

function notRunnable(unit: ReferenceMeasurement['unit'], what: string): ReferenceMeasurement {
  return { value: 0, unit, pass: false, marginToLimit: Number.NEGATIVE_INFINITY, runnable: false, conditions: `The engine does not start, so ${what} cannot be done on this car.` };
}

function batteryOcv(params: VehicleParams, faults: readonly Fault[], rules: PassRules): ReferenceMeasurement {
  const s = new Script(params, faults);
  s.leads('battery-pos', 'battery-neg').wait(1);
  s.pileCurrent(SURFACE_CHARGE_LOAD_A, params.pile.maxCurrentAAt12V);
  s.wait(SURFACE_CHARGE_LOAD_S - 0.8).pile(0).wait(OCV_REST_S);
  const v = s.read().voltmeterV ?? 0;
  return {
    value: v,
    unit: 'V',
    pass: v >= rules.socChargedMinV,
    marginToLimit: v - rules.socChargedMinV,
    runnable: true,
    conditions: `Key off, accessories off; surface charge removed with about ${SURFACE_CHARGE_LOAD_A} A for ${SURFACE_CHARGE_LOAD_S} s, then ${OCV_REST_S} s of rest; leads on the battery posts; pass at ${fmtV(rules.socChargedMinV)} or more.`,
  };
}

function batteryLoad(params: VehicleParams, faults: readonly Fault[], rules: PassRules): ReferenceMeasurement {
  const s = new Script(params, faults);
  const targetA = params.battery.cca / 2;
  const min = loadTestMinimumV(rules.batteryLoadMinV, params.battery.tempC);
  s.leads('battery-pos', 'battery-neg').wait(1);
  s.pileCurrent(SURFACE_CHARGE_BURST_A, params.pile.maxCurrentAAt12V);
  s.wait(SURFACE_CHARGE_BURST_S - 0.8).pile(0).wait(LOAD_TEST_WAIT_S);
  s.pileCurrent(targetA, params.pile.maxCurrentAAt12V);
  // pileCurrent took 0.8 s of the burst; hold the rest of the 15 s.
  s.wait(LOAD_TEST_S - 0.8);
  const r = s.read();
  s.pile(0);
  const v = r.voltmeterV ?? 0;
  return {
    value: v,
    unit: 'V',
    pass: v >= min,
    marginToLimit: v - min,
    runnable: true,
    conditions: `Engine off; surface charge removed (${SURFACE_CHARGE_BURST_A} A for ${SURFACE_CHARGE_BURST_S} s, then ${LOAD_TEST_WAIT_S} s); pile on the posts at half the CCA (${Math.round(targetA)} A; ${fmtA(r.pileA)} at the end) for ${LOAD_TEST_S} s, voltage at the posts at the end; pass at ${fmtV(min, 1)} or more at ${params.battery.tempC.toFixed(0)} °C.`,
  };
}

function regulatedVoltage(params: VehicleParams, faults: readonly Fault[], rules: PassRules): ReferenceMeasurement {
  const s = new Script(params, faults);
  s.leads('battery-pos', 'battery-neg').wait(0.2);
  if (!s.start().started) return notRunnable('V', 'the regulated-voltage test');
  s.wait(AFTER_START_IDLE_S).rpm(TEST_RPM).wait(REGULATED_SETTLE_S);
  const v = s.read().voltmeterV ?? 0;
  return {
    value: v,
    unit: 'V',
    pass: v >= rules.regulatedMinV && v <= rules.regulatedMaxV,
    marginToLimit: Math.min(v - rules.regulatedMinV, rules.regulatedMaxV - v),
    runnable: true,
    conditions: `Engine at ${TEST_RPM} rpm for ${REGULATED_SETTLE_S} s, accessories off, pile at zero, leads on the battery posts; pass from ${fmtV(rules.regulatedMinV, 1)} to ${fmtV(rules.regulatedMaxV, 1)}.`,
  };
}

function output(params: VehicleParams, faults: readonly Fault[], rules: PassRules): ReferenceMeasurement {
  const s = new Script(params, faults);
  s.leads('battery-pos', 'battery-neg').clampOnBplus();
  if (!s.start().started) return notRunnable('A', 'the output test');
  s.wait(AFTER_START_IDLE_S).rpm(TEST_RPM).wait(4);
  s.loadTo(rules.outputLoadedVoltageV);
  const r = s.read();
  s.pile(0);
  const a = r.clampA ?? 0;
  const mark = outputPassMarkA(rules.output, params.alternator.ratedCurrentA);
  return {
    value: a,
    unit: 'A',
    pass: a >= mark,
    marginToLimit: a - mark,
    runnable: true,
    conditions: `Engine at ${TEST_RPM} rpm, pile turned up until the battery reads about ${fmtV(rules.outputLoadedVoltageV, 1)} (${fmtV(r.voltmeterV)}), clamp zeroed in air and on the B+ cable toward the battery, the load held only long enough to read; pass at ${mark.toFixed(0)} A or more.`,
  };
}

function voltageDrop(params: VehicleParams, faults: readonly Fault[], rules: PassRules, side: 'positive' | 'ground'): ReferenceMeasurement {
  const s = new Script(params, faults);
  if (side === 'positive') s.leads('alt-bplus', 'battery-pos');
  else s.leads('battery-neg', 'alt-case');
  s.clampOnBplus();
  if (!s.start().started) return notRunnable('V', `the ${side === 'positive' ? 'positive-side' : 'ground-side'} voltage-drop test`);
  s.rpm(TEST_RPM).wait(SETTLED_AFTER_START_S);
  s.pileCurrent(DROP_TEST_A, params.pile.maxCurrentAAt12V);
  s.wait(1);
  const r = s.read();
  s.pile(0);
  const v = r.voltmeterV ?? 0;
  const max = side === 'positive' ? rules.maxDropPositiveV : rules.maxDropGroundV;
  const leads = side === 'positive' ? 'Red on the B+ stud, black on the battery positive post' : 'Red on the battery negative post, black on the alternator case';
  return {
    value: v,
    unit: 'V',
    pass: Math.abs(v) <= max,
    marginToLimit: max - Math.abs(v),
    runnable: true,
    conditions: `${leads}; engine at ${TEST_RPM} rpm, ${SETTLED_AFTER_START_S} s after the start, the pile on the posts drawing about ${DROP_TEST_A} A (${fmtA(r.pileA)}; ${fmtA(r.clampA)} on the B+ cable); pass at ${fmtV(max)} or less.`,
  };
}

function ripple(params: VehicleParams, faults: readonly Fault[], rules: PassRules): ReferenceMeasurement {
  const s = new Script(params, faults);
  s.leads('battery-pos', 'battery-neg').clampOnBplus();
  if (!s.start().started) return notRunnable('V AC', 'the ripple check');
  s.rpm(RIPPLE_RPM).wait(SETTLED_AFTER_START_S);
  s.alternatorCurrent(RIPPLE_LOAD_SHARE * params.alternator.ratedCurrentA);
  s.wait(1);
  const r = s.read();
  s.pile(0);
  const vac = r.rippleVac ?? 0;
  return {
    value: vac,
    unit: 'V AC',
    pass: vac <= rules.maxRippleVac,
    marginToLimit: rules.maxRippleVac - vac,
    runnable: true,
    conditions: `AC volts at the battery posts; engine at ${RIPPLE_RPM} rpm, ${SETTLED_AFTER_START_S} s after the start, the pile set until the alternator gives about half its rating (${fmtA(r.clampA)} on the B+ cable); pass at ${Math.round(rules.maxRippleVac * 1000)} mV AC or less.`,
  };
}

function keyOffDraw(params: VehicleParams, faults: readonly Fault[], rules: PassRules): ReferenceMeasurement {
  const s = new Script(params, faults);
  s.ammeter(true).wait(params.loads.moduleSleepDelayS + DRAW_MARGIN_S);
  const a = s.read().ammeterA ?? 0;
  return {
    value: a,
    unit: 'A',
    pass: a <= rules.maxKeyOffDrawA,
    marginToLimit: rules.maxKeyOffDrawA - a,
    runnable: true,
    conditions: `Key off, accessories off, series ammeter at the battery negative, read ${params.loads.moduleSleepDelayS + DRAW_MARGIN_S} s after fitting it (past the modules' sleep delay); pass at ${Math.round(rules.maxKeyOffDrawA * 1000)} mA or less.`,
  };
}

function cranking(params: VehicleParams, faults: readonly Fault[]): ReferenceMeasurement {
  const s = new Script(params, faults);
  s.leads('battery-pos', 'battery-neg').wait(1);
  const { lowestV, started } = s.start();
  const v = lowestV ?? 0;
  return {
    value: v,
    unit: 'V',
    pass: v >= CRANKING_MIN_V && started,
    marginToLimit: started ? v - CRANKING_MIN_V : Number.NEGATIVE_INFINITY,
    runnable: true,
    conditions: `Leads on the battery posts, key to start until the engine fires (at most ${CRANK_MAX_S} s), lowest voltage while cranking${started ? '' : '; the engine did not start'}; pass at ${fmtV(CRANKING_MIN_V, 1)} or more and a start.`,
  };
}

/** The reference measurement of every diagnostic test on a scenario's car, with its faults present. */
export function referenceMeasurements(def: Pick<ScenarioDefinition, 'vehicle' | 'faults' | 'passRules'>): ReferenceMeasurements {
  const params = def.vehicle.params;
  const faults: Fault[] = def.faults.map((f) => ({ id: f.id, kind: f.kind, severity01: f.severity01, onsetS: f.onsetS, intermittent: f.intermittent ?? null }));
  const rules = def.passRules;
  const out: Partial<ReferenceMeasurements> = {};
  for (const test of DIAGNOSTIC_TESTS) {
    out[test] = measure(test, params, faults, rules);
  }
  return out as ReferenceMeasurements;
}

/** One test's reference measurement. */
export function measure(test: DiagnosticTest, params: VehicleParams, faults: readonly Fault[], rules: PassRules): ReferenceMeasurement {
  switch (test) {
    case 'battery-ocv':
      return batteryOcv(params, faults, rules);
    case 'battery-load':
      return batteryLoad(params, faults, rules);
    case 'regulated-voltage':
      return regulatedVoltage(params, faults, rules);
    case 'output':
      return output(params, faults, rules);
    case 'voltage-drop-positive':
      return voltageDrop(params, faults, rules, 'positive');
    case 'voltage-drop-ground':
      return voltageDrop(params, faults, rules, 'ground');
    case 'ripple':
      return ripple(params, faults, rules);
    case 'key-off-draw':
      return keyOffDraw(params, faults, rules);
    case 'cranking':
      return cranking(params, faults);
  }
}
