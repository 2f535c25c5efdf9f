/**
 * Reference procedures: each diagnostic test run on the model the way the
 * bench's procedure panel tells a student to run it, giving the value a
 * careful student reads and the verdict under the scenario's pass rules.
 * Grading takes the right verdict of each test from here, so the key is what
 * the car shows, not what a fault is expected to show.
 *
 * Each test is its own run from the start of the attempt with the scenario's
 * faults present in full (onsets and intermittent patterns aside: the
 * reference describes the car with its faults in place). Pure and
 * deterministic: the same definition always gives the same measurements.
 *
 * Units are in the names: V, Vac (rms), A, rpm, s, ms.
 */
import type { DiagnosticTest, Fault } from '../sim/faults.ts';
import type { VehicleParams } from '../sim/params.ts';
import { ScriptedBench } from '../sim/scripted-bench.ts';
import { DIAGNOSTIC_TESTS, outputPassMarkA, type PassRules, type ScenarioDefinition } from './scenario.ts';

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
  /** How the reading was taken, in the words of the procedure. */
  conditions: string;
}

export type ReferenceMeasurements = Record<DiagnosticTest, ReferenceMeasurement>;

/** Seed of every reference run (the clamp's hall offset is zeroed away, so the seed only moves the tach flicker). */
export const REFERENCE_SEED = 1;
/** Engine speed the assistant holds for the running tests. */
export const TEST_RPM = 2000;
/** Rest with the key off before the open-circuit voltage is read. */
export const OCV_REST_S = 120;
/** The battery load test: half the CCA for this long. */
export const LOAD_TEST_S = 15;
/** Settling time at 2,000 rpm before the regulated voltage is read. */
export const REGULATED_SETTLE_S = 20;
/** The loads switched on for the voltage-drop and ripple tests (when the car has them). */
export const LOADED_ACCESSORY_IDS: readonly string[] = ['headlamps', 'blower'];
/** Settling time with those loads on before the drops and ripple are read. */
export const LOADED_SETTLE_S = 8;
/** Wait after the modules' sleep delay before the draw is read. */
export const DRAW_MARGIN_S = 10;
/** Longest cranking burst of the cranking test. */
export const CRANK_MAX_S = 3;
/** Lowest voltage at the battery while cranking a warm engine (common practice, no source). */
export const CRANKING_MIN_V = 9.6;
/** Display tick: the grid on which the bench shows readings and the server samples them. */
const TICK_MS = 100;

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
    for (let t = 0; t < CRANK_MAX_S * 1000 && this.point.state.engineStatus !== 'running'; t += TICK_MS) {
      this.wait(TICK_MS / 1000);
      const v = this.read().voltmeterV;
      if (v !== null && (lowestV === null || v < lowestV)) lowestV = v;
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
}

const fmtV = (x: number | null, d = 2) => (x === null ? 'no reading' : `${x.toFixed(d)} V`);
const fmtA = (x: number | null) => (x === null ? 'no reading' : `${x.toFixed(1)} A`);

function onLoads(s: Script, params: VehicleParams): string[] {
  const ids = params.loads.accessories.map((a) => a.id).filter((id) => LOADED_ACCESSORY_IDS.includes(id));
  for (const id of ids) s.accessory(id, true);
  return ids;
}

function loadsText(params: VehicleParams, ids: readonly string[]): string {
  const names = params.loads.accessories.filter((a) => ids.includes(a.id)).map((a) => a.label.toLowerCase());
  return names.length ? names.join(' and ') + ' on' : 'no switchable loads';
}

function batteryOcv(params: VehicleParams, faults: readonly Fault[], rules: PassRules): ReferenceMeasurement {
  const s = new Script(params, faults);
  s.leads('battery-pos', 'battery-neg').wait(OCV_REST_S);
  const v = s.read().voltmeterV ?? 0;
  return {
    value: v,
    unit: 'V',
    pass: v >= rules.socChargedMinV,
    marginToLimit: v - rules.socChargedMinV,
    conditions: `Key off, accessories off, ${OCV_REST_S} s rest, leads on the battery posts; pass at ${fmtV(rules.socChargedMinV)} or more.`,
  };
}

function batteryLoad(params: VehicleParams, faults: readonly Fault[], rules: PassRules): ReferenceMeasurement {
  const s = new Script(params, faults);
  const targetA = params.battery.cca / 2;
  s.leads('battery-pos', 'battery-neg').wait(1);
  s.pileCurrent(targetA, params.pile.maxCurrentAAt12V);
  // pileCurrent took 0.8 s of the burst; hold the rest of the 15 s.
  s.wait(LOAD_TEST_S - 0.8);
  const r = s.read();
  const v = r.voltmeterV ?? 0;
  return {
    value: v,
    unit: 'V',
    pass: v >= rules.batteryLoadMinV,
    marginToLimit: v - rules.batteryLoadMinV,
    conditions: `Engine off, pile on the posts at half the CCA (${Math.round(targetA)} A; ${fmtA(r.pileA)} at the end) for ${LOAD_TEST_S} s, voltage at the posts at the end; pass at ${fmtV(rules.batteryLoadMinV, 1)} or more.`,
  };
}

function regulatedVoltage(params: VehicleParams, faults: readonly Fault[], rules: PassRules): ReferenceMeasurement {
  const s = new Script(params, faults);
  s.leads('battery-pos', 'battery-neg').wait(0.2);
  s.start();
  s.rpm(TEST_RPM).wait(REGULATED_SETTLE_S);
  const v = s.read().voltmeterV ?? 0;
  return {
    value: v,
    unit: 'V',
    pass: v >= rules.regulatedMinV && v <= rules.regulatedMaxV,
    marginToLimit: Math.min(v - rules.regulatedMinV, rules.regulatedMaxV - v),
    conditions: `Engine at ${TEST_RPM} rpm, accessories off, pile at zero, ${REGULATED_SETTLE_S} s to settle, leads on the battery posts; pass from ${fmtV(rules.regulatedMinV, 1)} to ${fmtV(rules.regulatedMaxV, 1)}.`,
  };
}

function output(params: VehicleParams, faults: readonly Fault[], rules: PassRules): ReferenceMeasurement {
  const s = new Script(params, faults);
  s.leads('battery-pos', 'battery-neg').clamp(null).wait(0.2).zeroClamp().wait(0.1);
  s.clamp('bplus-cable', 'toward-battery');
  s.start();
  s.rpm(TEST_RPM).wait(4);
  s.loadTo(rules.outputLoadedVoltageV);
  const r = s.read();
  const a = r.clampA ?? 0;
  const mark = outputPassMarkA(rules.output, params.alternator.ratedCurrentA);
  return {
    value: a,
    unit: 'A',
    pass: a >= mark,
    marginToLimit: a - mark,
    conditions: `Engine at ${TEST_RPM} rpm, pile turned up until the battery reads about ${fmtV(rules.outputLoadedVoltageV, 1)} (${fmtV(r.voltmeterV)}), zeroed clamp on the B+ cable toward the battery; pass at ${mark.toFixed(0)} A or more.`,
  };
}

type LoadedReading = 'drop-positive' | 'drop-ground' | 'ripple';

function loaded(params: VehicleParams, faults: readonly Fault[], rules: PassRules, which: LoadedReading): ReferenceMeasurement {
  const s = new Script(params, faults);
  if (which === 'drop-positive') s.leads('alt-bplus', 'battery-pos');
  else if (which === 'drop-ground') s.leads('battery-neg', 'alt-case');
  else s.leads('battery-pos', 'battery-neg');
  s.clamp(null).wait(0.2).zeroClamp().wait(0.1);
  s.clamp('bplus-cable', 'toward-battery');
  s.start();
  s.rpm(TEST_RPM);
  const ids = onLoads(s, params);
  s.wait(LOADED_SETTLE_S);
  const r = s.read();
  const at = `engine at ${TEST_RPM} rpm, ${loadsText(params, ids)}, ${LOADED_SETTLE_S} s to settle (${fmtA(r.clampA)} in the B+ cable)`;
  if (which === 'ripple') {
    const vac = r.rippleVac ?? 0;
    return {
      value: vac,
      unit: 'V AC',
      pass: vac <= rules.maxRippleVac,
      marginToLimit: rules.maxRippleVac - vac,
      conditions: `AC volts at the battery posts, ${at}; pass at ${Math.round(rules.maxRippleVac * 1000)} mV AC or less.`,
    };
  }
  const v = r.voltmeterV ?? 0;
  const max = which === 'drop-positive' ? rules.maxDropPositiveV : rules.maxDropGroundV;
  const leads = which === 'drop-positive' ? 'Red on the B+ stud, black on the battery positive post' : 'Red on the battery negative post, black on the alternator case';
  return { value: v, unit: 'V', pass: Math.abs(v) <= max, marginToLimit: max - Math.abs(v), conditions: `${leads}, ${at}; pass at ${fmtV(max)} or less.` };
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

function measure(test: DiagnosticTest, params: VehicleParams, faults: readonly Fault[], rules: PassRules): ReferenceMeasurement {
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
      return loaded(params, faults, rules, 'drop-positive');
    case 'voltage-drop-ground':
      return loaded(params, faults, rules, 'drop-ground');
    case 'ripple':
      return loaded(params, faults, rules, 'ripple');
    case 'key-off-draw':
      return keyOffDraw(params, faults, rules);
    case 'cranking':
      return cranking(params, faults);
  }
}
