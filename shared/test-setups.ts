/**
 * The set-up of each diagnostic test, declared once, in the model's own
 * terms: where the leads and the clamp must be and which way, the engine,
 * the rpm band, the loads, the pile, and how long it all has to hold. The
 * bench uses it to tell the student what is missing before recording, the
 * grader to decide whether a reading is evidence, the replay to mark each
 * recorded reading, and the procedure panel to list what the grader checks.
 *
 * A `SetupTracker` is fed one `SetupSample` per display tick (every 100 ms
 * of sim time, from 0 ms) and answers, for each test, whether its set-up
 * holds now, for how long it has held, and what is missing, in sentences a
 * student understands. The bench and the server feed it the same samples of
 * the same run, so they agree tick for tick.
 *
 * Sources of the conditions (each named beside its constant): vehicle
 * makers' procedures where there is one, else common practice.
 *
 * Units are in the names: V, A, s, ms, rpm.
 */
import type { DiagnosticTest } from '../sim/faults.ts';
import type { ClampArrow, Conductor, ConnectionPoint, KeyPosition } from '../sim/inputs.ts';
import type { Readings } from '../sim/instruments.ts';
import type { VehicleParams } from '../sim/params.ts';
import type { EngineStatus, SimState } from '../sim/step.ts';
import { groupThousands, showVolts, type MeterQuantity } from './meter-display.ts';

// ---------------------------------------------------------------------------
// The conditions' numbers. The model's fidelity work may retune them; tests
// use these names, never the numbers.

/** A pile drawing less than this is off (common practice, no source). */
export const PILE_OFF_A = 1;

/** Open-circuit voltage: held this long at rest before the reading (common practice, no source). */
export const OCV_HOLD_S = 5;
/** Surface charge removed by a discharge of at least this current... (vehicle maker's battery test: 300 A for 15 s; headlamps for a minute are common practice) */
export const SURFACE_DISCHARGE_A = 10;
/** ...held this long... */
export const SURFACE_DISCHARGE_S = 60;
/** ...then the key off this long before reading (common practice, no source). */
export const SURFACE_REST_S = 30;
/** Or simply a rest of this long with the key off (vehicle maker's battery test, Kia: 2 h). */
export const LONG_REST_S = 2 * 60 * 60;
/** Current into the battery above which charge has flowed (it then carries a surface charge). */
export const CHARGE_FLOW_A = 0.5;

/** Battery load test: the pile at half the CCA, this close (vehicle maker's battery test, Kia Amanti: ½ CCA for 15 s)... */
export const LOAD_CCA_FRACTION_MIN = 0.4;
export const LOAD_CCA_FRACTION_MAX = 0.6;
/**
 * A battery too weak to deliver that much even with the pile turned fully up
 * (its voltage collapses) is loaded as hard as the tester can: the pile's
 * dial at or above this share of its travel counts as the load (common practice, no source).
 */
export const PILE_FULL_DIAL = 0.95;
/** ...held continuously this long at the reading (the reading is the voltage at the end of the ~15 s burst). */
export const LOAD_HOLD_S = 14;

/** Regulated voltage: the engine has run this long... (common practice, no source) */
export const REGULATED_ENGINE_RUN_S = 20;
/** ...at this speed (vehicle makers' charging tests: about 2,000 rpm)... */
export const REGULATED_RPM_MIN = 1500;
export const REGULATED_RPM_MAX = 2500;
/** ...all held this long. */
export const REGULATED_HOLD_S = 10;

/** Output test: about 2,000 rpm (vehicle maker's output test, GM: 2,000 rpm; Kia: 2,500 rpm)... */
export const OUTPUT_RPM_MIN = 1800;
export const OUTPUT_RPM_MAX = 2600;
/** ...the pile loaded until the posts read about 12 V (Kia: not below 12 V; GM keeps 13 V), within this band... */
export const OUTPUT_POST_MIN_V = 11.0;
export const OUTPUT_POST_MAX_V = 12.6;
/** ...held this long. */
export const OUTPUT_HOLD_S = 1;

/** Voltage drops and ripple: the engine has run this long, so the battery's recharge after the crank is over (common practice, no source)... */
export const LOADED_ENGINE_RUN_S = 45;
/** ...at this speed (vehicle maker's drop test, Hyundai: about 2,500 rpm; common practice 2,000)... */
export const LOADED_RPM_MIN = 1500;
export const LOADED_RPM_MAX = 2600;
/**
 * ...the drops with the pile on the posts drawing about 20 A (Chrysler
 * charging-circuit resistance test: 20 A; Hyundai: loads set for 20 A), so
 * the current runs through every joint of the positive side, the post
 * connection included (accessories hang on the junction and bypass it)...
 */
export const DROP_PILE_MIN_A = 15;
export const DROP_PILE_MAX_A = 30;
/**
 * ...the ripple with the alternator giving about half its rating: a failed
 * diode or winding is easiest to see at high output (vehicle maker's
 * oscilloscope check, Mitsubishi; check value 12: healthy below 0.1 V AC at
 * 2,000 rpm with loads on)...
 */
export const RIPPLE_OUTPUT_SHARE_MIN = 0.4;
export const RIPPLE_OUTPUT_SHARE_MAX = 0.75;
/** A unit that cannot give that much: the pile turned up until the battery supplies more than this, the unit then at its limit (common practice, no source). */
export const OUTPUT_AT_LIMIT_BATTERY_A = 1;
/** ...all held this long. */
export const LOADED_HOLD_S = 5;

/** Key-off draw: modules asleep, held this long (vehicle maker's drain test, Ford: read after the modules sleep). */
export const DRAW_HOLD_S = 5;

// ---------------------------------------------------------------------------
// What the tracker reads of each tick

/** One display tick of a run, as the set-ups read it. */
export interface SetupSample {
  atMs: number;
  engine: EngineStatus;
  key: KeyPosition;
  tachRpm: number;
  red: ConnectionPoint | null;
  black: ConnectionPoint | null;
  clampOn: Conductor | null;
  clampArrow: ClampArrow;
  /** The last clamp-zero was taken with the jaws around no conductor. */
  clampZeroAway: boolean;
  ammeterInSeries: boolean;
  /** Seconds before the modules sleep (0: asleep). */
  modulesAwakeS: number;
  /** Switchable accessories switched on. */
  accessoriesOn: number;
  /** Current drawn by the switched loads: the pile and the accessories switched on. */
  switchedLoadA: number;
  pileA: number;
  /** The pile's dial, 0..1. */
  pileDial01: number;
  /** Battery current, positive on discharge. */
  batteryA: number;
  /** Current in the B+ cable, alternator to junction: the alternator's output. */
  outputA: number;
  voltmeterV: number | null;
}

/** Voltage at which loads given in amperes draw their rating (as the model's step). */
const LOAD_RATING_V = 12.6;

/** The sample of a state (its readings passed in when already read). */
export function setupSampleOf(params: VehicleParams, state: SimState, readings: Pick<Readings, 'engine' | 'tachRpm' | 'pileA' | 'voltmeterV'>): SetupSample {
  const c = state.controls;
  const net = state.net;
  let accessoriesA = 0;
  if (c.key !== 'off' && c.accessoriesOn.length) {
    const loadV = net.nodeV.junction - net.nodeV.chassis;
    for (const id of c.accessoriesOn) {
      const acc = params.loads.accessories.find((a) => a.id === id);
      if (!acc) continue;
      accessoriesA += 'resistanceOhm' in acc ? loadV / acc.resistanceOhm : (acc.currentA * loadV) / LOAD_RATING_V;
    }
  }
  return {
    atMs: state.timeMs,
    engine: readings.engine,
    key: c.key,
    tachRpm: readings.tachRpm,
    red: c.leads.red,
    black: c.leads.black,
    clampOn: c.clamp.conductor,
    clampArrow: c.clamp.arrow,
    clampZeroAway: c.clampZeroAway,
    ammeterInSeries: c.ammeterInSeries,
    modulesAwakeS: state.modulesAwakeS,
    accessoriesOn: c.key !== 'off' ? c.accessoriesOn.length : 0,
    switchedLoadA: Math.max(0, readings.pileA) + Math.max(0, accessoriesA),
    pileA: readings.pileA,
    pileDial01: c.pileDial01,
    batteryA: net.branchA.battery,
    outputA: net.branchA.bplusCable,
    voltmeterV: readings.voltmeterV,
  };
}

// ---------------------------------------------------------------------------
// The declarations

export interface LeadPair {
  red: ConnectionPoint;
  black: ConnectionPoint;
}

export const ON_THE_POSTS: LeadPair = { red: 'battery-pos', black: 'battery-neg' };

/** One condition of a set-up, as data. */
export type SetupCondition =
  | { kind: 'engine-running'; forAtLeastS: number }
  | { kind: 'engine-stopped' }
  | { kind: 'key-off' }
  | { kind: 'rpm'; min: number; max: number }
  | { kind: 'leads'; pairs: LeadPair[] }
  | { kind: 'clamp'; conductor: Conductor; arrow: ClampArrow; zeroedAway: boolean }
  | { kind: 'pile-off'; maxA: number }
  | { kind: 'pile-share-of-cca'; min: number; max: number; orFullDial: number }
  | { kind: 'accessories-off' }
  | { kind: 'switched-load'; minA: number }
  | { kind: 'pile-current'; minA: number; maxA: number }
  | { kind: 'output-share-of-rating'; min: number; max: number }
  | { kind: 'post-voltage'; minV: number; maxV: number }
  | { kind: 'series-ammeter' }
  | { kind: 'modules-asleep' }
  | { kind: 'surface-charge-settled'; dischargeA: number; dischargeS: number; restS: number; longRestS: number }
  | { kind: 'cranking' };

export interface TestSetup {
  test: DiagnosticTest;
  /** What a reading of this test measures, and with what. */
  quantity: Exclude<MeterQuantity, 'rpm'>;
  meter: string;
  conditions: SetupCondition[];
  /** Every condition held together this long (0: the moment they hold). */
  holdS: number;
  /** 'now': the meter at the reading's moment; 'crank-minimum': the lowest voltage of the last crank. */
  reading: 'now' | 'crank-minimum';
}

const LOADED_RUN: SetupCondition = { kind: 'engine-running', forAtLeastS: LOADED_ENGINE_RUN_S };
const LOADED_RPM: SetupCondition = { kind: 'rpm', min: LOADED_RPM_MIN, max: LOADED_RPM_MAX };
const DROP_LOAD: SetupCondition = { kind: 'pile-current', minA: DROP_PILE_MIN_A, maxA: DROP_PILE_MAX_A };
const RIPPLE_LOAD: SetupCondition = { kind: 'output-share-of-rating', min: RIPPLE_OUTPUT_SHARE_MIN, max: RIPPLE_OUTPUT_SHARE_MAX };

export const TEST_SETUPS: Readonly<Record<DiagnosticTest, TestSetup>> = {
  'battery-ocv': {
    test: 'battery-ocv',
    quantity: 'voltage',
    meter: 'the voltmeter',
    conditions: [
      { kind: 'key-off' },
      { kind: 'pile-off', maxA: PILE_OFF_A },
      { kind: 'leads', pairs: [ON_THE_POSTS] },
      { kind: 'surface-charge-settled', dischargeA: SURFACE_DISCHARGE_A, dischargeS: SURFACE_DISCHARGE_S, restS: SURFACE_REST_S, longRestS: LONG_REST_S },
    ],
    holdS: OCV_HOLD_S,
    reading: 'now',
  },
  'battery-load': {
    test: 'battery-load',
    quantity: 'voltage',
    meter: 'the voltmeter',
    conditions: [{ kind: 'engine-stopped' }, { kind: 'leads', pairs: [ON_THE_POSTS] }, { kind: 'pile-share-of-cca', min: LOAD_CCA_FRACTION_MIN, max: LOAD_CCA_FRACTION_MAX, orFullDial: PILE_FULL_DIAL }],
    holdS: LOAD_HOLD_S,
    reading: 'now',
  },
  cranking: {
    test: 'cranking',
    quantity: 'voltage',
    meter: 'the voltmeter (lowest while cranking)',
    conditions: [{ kind: 'leads', pairs: [ON_THE_POSTS] }, { kind: 'cranking' }],
    holdS: 0,
    reading: 'crank-minimum',
  },
  'regulated-voltage': {
    test: 'regulated-voltage',
    quantity: 'voltage',
    meter: 'the voltmeter',
    conditions: [
      { kind: 'engine-running', forAtLeastS: REGULATED_ENGINE_RUN_S },
      { kind: 'rpm', min: REGULATED_RPM_MIN, max: REGULATED_RPM_MAX },
      { kind: 'pile-off', maxA: PILE_OFF_A },
      { kind: 'accessories-off' },
      { kind: 'leads', pairs: [ON_THE_POSTS] },
    ],
    holdS: REGULATED_HOLD_S,
    reading: 'now',
  },
  output: {
    test: 'output',
    quantity: 'current',
    meter: 'the clamp',
    conditions: [
      { kind: 'engine-running', forAtLeastS: 0 },
      { kind: 'rpm', min: OUTPUT_RPM_MIN, max: OUTPUT_RPM_MAX },
      { kind: 'clamp', conductor: 'bplus-cable', arrow: 'toward-battery', zeroedAway: true },
      { kind: 'leads', pairs: [ON_THE_POSTS] },
      { kind: 'post-voltage', minV: OUTPUT_POST_MIN_V, maxV: OUTPUT_POST_MAX_V },
    ],
    holdS: OUTPUT_HOLD_S,
    reading: 'now',
  },
  'voltage-drop-positive': {
    test: 'voltage-drop-positive',
    quantity: 'voltage',
    meter: 'the voltmeter',
    conditions: [LOADED_RUN, LOADED_RPM, { kind: 'leads', pairs: [{ red: 'alt-bplus', black: 'battery-pos' }] }, DROP_LOAD],
    holdS: LOADED_HOLD_S,
    reading: 'now',
  },
  'voltage-drop-ground': {
    test: 'voltage-drop-ground',
    quantity: 'voltage',
    meter: 'the voltmeter',
    conditions: [LOADED_RUN, LOADED_RPM, { kind: 'leads', pairs: [{ red: 'battery-neg', black: 'alt-case' }] }, DROP_LOAD],
    holdS: LOADED_HOLD_S,
    reading: 'now',
  },
  ripple: {
    test: 'ripple',
    quantity: 'ripple',
    meter: 'the voltmeter on AC',
    conditions: [LOADED_RUN, LOADED_RPM, { kind: 'leads', pairs: [ON_THE_POSTS, { red: 'alt-bplus', black: 'alt-case' }] }, RIPPLE_LOAD],
    holdS: LOADED_HOLD_S,
    reading: 'now',
  },
  'key-off-draw': {
    test: 'key-off-draw',
    quantity: 'draw',
    meter: 'the series ammeter',
    conditions: [{ kind: 'key-off' }, { kind: 'series-ammeter' }, { kind: 'modules-asleep' }],
    holdS: DRAW_HOLD_S,
    reading: 'now',
  },
};

// ---------------------------------------------------------------------------
// Words

const POINT_WORDS: Readonly<Record<ConnectionPoint, string>> = {
  'battery-pos': 'the battery + post',
  'battery-neg': 'the battery − post',
  'jump-pos': 'the jump post +',
  'jump-neg': 'the jump post −',
  'alt-bplus': 'the alternator B+ stud',
  'alt-case': 'the alternator case',
  'engine-ground': 'engine ground',
  chassis: 'the chassis',
};

const CONDUCTOR_WORDS: Readonly<Record<Conductor, string>> = {
  'bplus-cable': 'the B+ cable',
  'battery-pos-cable': 'the battery + cable',
  'battery-neg-cable': 'the battery − cable',
  'ground-strap': 'the ground strap',
  'sense-line': 'the sense line',
};

const n0 = (x: number) => groupThousands(Math.round(x));
const secs = (ms: number) => `${Math.floor(ms / 1000)} s`;
const pairWords = (p: LeadPair) => `red on ${POINT_WORDS[p.red]}, black on ${POINT_WORDS[p.black]}`;

function durationWords(s: number): string {
  if (s >= 3600 && s % 3600 === 0) return `${s / 3600} h`;
  if (s >= 60 && s % 60 === 0) return `${s / 60} min`;
  return `${s} s`;
}

/** What a condition asks, in words (the procedure panel's list of what the grader checks). */
export function describeCondition(c: SetupCondition, car: { cca: number; ratedA: number }): string {
  switch (c.kind) {
    case 'engine-running':
      return c.forAtLeastS > 0 ? `Engine running for at least ${durationWords(c.forAtLeastS)}` : 'Engine running';
    case 'engine-stopped':
      return 'Engine stopped';
    case 'key-off':
      return 'Key off';
    case 'rpm':
      return `Engine held at ${n0(c.min)}–${n0(c.max)} rpm`;
    case 'leads':
      return `Leads: ${c.pairs.map(pairWords).join('; or ')}`;
    case 'clamp':
      return `Clamp on ${CONDUCTOR_WORDS[c.conductor]}, arrow ${c.arrow === 'toward-battery' ? 'toward the battery' : 'toward the alternator'}${c.zeroedAway ? ', zeroed with its jaws away from any cable' : ''}`;
    case 'pile-off':
      return 'Pile off';
    case 'pile-share-of-cca':
      return `Pile drawing half the CCA: ${n0(c.min * car.cca)}–${n0(c.max * car.cca)} A for this ${n0(car.cca)} CCA battery (or the pile fully up, if the battery cannot deliver that)`;
    case 'accessories-off':
      return 'Accessories off';
    case 'switched-load':
      return `At least ${n0(c.minA)} A of load switched on (accessories or the pile)`;
    case 'pile-current':
      return `The pile on the posts drawing about ${n0((c.minA + c.maxA) / 2 - 2.5)} A (${n0(c.minA)}–${n0(c.maxA)} A)`;
    case 'output-share-of-rating':
      return `The pile turned up until the alternator gives about half its rating: ${n0(c.min * car.ratedA)}–${n0(c.max * car.ratedA)} A on the B+ cable for this ${n0(car.ratedA)} A unit (or, if it cannot give that, until the battery starts to supply the rest)`;
    case 'post-voltage':
      return `Pile loaded until the posts read about 12 V (${c.minV.toFixed(1)}–${c.maxV.toFixed(1)} V)`;
    case 'series-ammeter':
      return 'Series ammeter fitted at the battery negative';
    case 'modules-asleep':
      return 'Modules asleep';
    case 'surface-charge-settled':
      return `No surface charge: the battery not charged in this attempt, or after charging a ${n0(c.dischargeA)} A load for ${durationWords(c.dischargeS)} then ${durationWords(c.restS)} with the key off, or ${durationWords(c.longRestS)} at rest`;
    case 'cranking':
      return 'Key at start with the engine cranking; the reading is the lowest voltage of the crank';
  }
}

/** Every condition of a test's set-up in words, with its hold. */
export function describeSetup(test: DiagnosticTest, car: { cca: number; ratedA: number }): string[] {
  const s = TEST_SETUPS[test];
  const lines = s.conditions.map((c) => describeCondition(c, car));
  if (s.holdS > 0) lines.push(`All of it held for ${durationWords(s.holdS)}`);
  return lines;
}

// ---------------------------------------------------------------------------
// The tracker

export interface SetupStatus {
  /** Every condition holds now and has held long enough. */
  holds: boolean;
  /** How long every condition has held together (0 when one does not hold now). */
  heldMs: number;
  /** What is missing, in words; empty when the set-up holds. */
  unmet: string[];
  /** Cranking only: the lowest voltage shown during the last crank (null before any). */
  crankMinV: number | null;
}

export interface SetupCar {
  /** The battery's cold-cranking amps (the car's spec). */
  cca: number;
  /** The battery starts with a surface charge (just off the charger): it must be dealt with as after charging. */
  startsCharged: boolean;
  /** The alternator's nameplate rating (the car's spec). */
  ratedA: number;
}

export const setupCarOf = (params: VehicleParams): SetupCar => ({
  cca: params.battery.cca,
  startsCharged: params.battery.initialSurfaceChargeV > 0.01,
  ratedA: params.alternator.ratedCurrentA,
});

const leadsMatch = (s: SetupSample, pairs: readonly LeadPair[]) => pairs.some((p) => s.red === p.red && s.black === p.black);

const TESTS = Object.keys(TEST_SETUPS) as DiagnosticTest[];
/** What `unmetOf` answers for a condition not met when no words are asked for. */
const MISSING = '';

export class SetupTracker {
  private last: SetupSample | null = null;
  /** Since when the engine has run without a break (null: not running). */
  private runningSinceMs: number | null = null;
  /** Surface charge: needs settling (charged in this attempt, or at the start). */
  private charged: boolean;
  private dischargeSinceMs: number | null = null;
  private discharged = false;
  /** Since when the key has been off and no discharge of SURFACE_DISCHARGE_A has flowed. */
  private restSinceMs: number | null = null;
  private keyOffSinceMs: number | null = null;
  /** The last crank: its lowest voltage shown, and whether the leads stayed on the posts. */
  private crank: { minV: number | null; leadsOk: boolean; active: boolean } | null = null;
  /** Per test: since when every condition has held (null: not now). */
  private since = new Map<DiagnosticTest, number | null>();

  constructor(private readonly car: SetupCar) {
    this.charged = car.startsCharged;
  }

  /** Takes the next display tick (in time order). */
  feed(s: SetupSample): void {
    const t = s.atMs;
    this.runningSinceMs = s.engine === 'running' ? (this.runningSinceMs ?? t) : null;
    // Surface charge: running the engine or any charging current leaves one; a long enough discharge then a rest removes it.
    if (s.engine === 'running' || s.batteryA < -CHARGE_FLOW_A) {
      this.charged = true;
      this.discharged = false;
      this.dischargeSinceMs = null;
    } else if (s.batteryA >= SURFACE_DISCHARGE_A) {
      this.dischargeSinceMs ??= t;
      if (t - this.dischargeSinceMs >= SURFACE_DISCHARGE_S * 1000) this.discharged = true;
    } else this.dischargeSinceMs = null;
    this.keyOffSinceMs = s.key === 'off' ? (this.keyOffSinceMs ?? t) : null;
    this.restSinceMs = s.key === 'off' && s.batteryA < SURFACE_DISCHARGE_A ? (this.restSinceMs ?? t) : null;
    // The crank: key at start with the engine turning over.
    const cranking = s.key === 'start' && s.engine === 'cranking';
    const onPosts = leadsMatch(s, [ON_THE_POSTS]);
    if (cranking) {
      const v = showVolts(s.voltmeterV)?.value ?? null;
      if (!this.crank || !this.crank.active) this.crank = { minV: v, leadsOk: onPosts, active: true };
      else {
        if (v !== null && (this.crank.minV === null || v < this.crank.minV)) this.crank.minV = v;
        this.crank.leadsOk &&= onPosts;
      }
    } else if (this.crank) this.crank.active = false;
    this.last = s;
    for (const test of TESTS) {
      const now = TEST_SETUPS[test].conditions.every((c) => this.unmetOf(c, s, false) === null);
      this.since.set(test, now ? (this.since.get(test) ?? t) : null);
    }
  }

  /** The set-up of a test at the last tick fed. */
  status(test: DiagnosticTest): SetupStatus {
    const s = this.last;
    const setup = TEST_SETUPS[test];
    const crankMinV = test === 'cranking' ? (this.crank?.minV ?? null) : null;
    if (!s) return { holds: false, heldMs: 0, unmet: ['The bench has not started yet'], crankMinV };
    const unmet = setup.conditions.flatMap((c) => this.unmetOf(c, s) ?? []);
    const since = this.since.get(test) ?? null;
    const heldMs = since === null ? 0 : s.atMs - since;
    if (unmet.length === 0 && heldMs < setup.holdS * 1000) unmet.push(`Hold the set-up ${durationWords(setup.holdS)} (${secs(heldMs)} so far)`);
    return { holds: unmet.length === 0, heldMs, unmet, crankMinV };
  }

  /** Every test's set-up at the last tick fed. */
  statuses(): Record<DiagnosticTest, SetupStatus> {
    const out = {} as Record<DiagnosticTest, SetupStatus>;
    for (const test of TESTS) out[test] = this.status(test);
    return out;
  }

  /** What is missing of one condition at a tick, or null when it holds (`explain` false: MISSING rather than words). */
  private unmetOf(c: SetupCondition, s: SetupSample, explain = true): string | null {
    const say = (words: () => string) => (explain ? words() : MISSING);
    switch (c.kind) {
      case 'engine-running': {
        if (s.engine !== 'running') return say(() => 'Start the engine');
        const ranMs = this.runningSinceMs === null ? 0 : s.atMs - this.runningSinceMs;
        return ranMs >= c.forAtLeastS * 1000 ? null : say(() => `Let the engine run ${durationWords(c.forAtLeastS)} first (${secs(ranMs)} so far)`);
      }
      case 'engine-stopped':
        return s.engine === 'running' || s.engine === 'cranking' ? say(() => 'Stop the engine') : null;
      case 'key-off':
        return s.key === 'off' ? null : say(() => 'Turn the key off');
      case 'rpm':
        return s.tachRpm >= c.min && s.tachRpm <= c.max ? null : say(() => `Hold ${n0(c.min)}–${n0(c.max)} rpm (now ${n0(Math.round(s.tachRpm / 10) * 10)})`);
      case 'leads':
        if (leadsMatch(s, c.pairs)) return null;
        return say(() => `Put the leads ${c.pairs.map(pairWords).join('; or ')} (now red on ${s.red ? POINT_WORDS[s.red] : 'nothing'}, black on ${s.black ? POINT_WORDS[s.black] : 'nothing'})`);
      case 'clamp':
        if (s.clampOn !== c.conductor) return say(() => `The clamp is not on ${CONDUCTOR_WORDS[c.conductor]}`);
        if (s.clampArrow !== c.arrow) return say(() => `Turn the clamp round: its arrow must point ${c.arrow === 'toward-battery' ? 'toward the battery' : 'toward the alternator'}`);
        if (c.zeroedAway && !s.clampZeroAway) return say(() => 'Zero the clamp with its jaws away from any cable, then clamp it on again');
        return null;
      case 'pile-off':
        return s.pileA < c.maxA ? null : say(() => `Turn the pile to zero (it draws ${n0(s.pileA)} A)`);
      case 'pile-share-of-cca': {
        const lo = c.min * this.car.cca;
        const hi = c.max * this.car.cca;
        if ((s.pileA >= lo && s.pileA <= hi) || (s.pileA < lo && s.pileA >= PILE_OFF_A && s.pileDial01 >= c.orFullDial)) return null;
        return say(() => `Load the battery to half its CCA: ${n0(lo)}–${n0(hi)} A on the pile, or the pile fully up if it cannot get there (now ${n0(s.pileA)} A)`);
      }
      case 'accessories-off':
        return s.accessoriesOn === 0 ? null : say(() => `Switch the accessories off (${s.accessoriesOn} on)`);
      case 'switched-load':
        return s.switchedLoadA >= c.minA ? null : say(() => `Switch on ${n0(c.minA)} A or more of load: headlamps, blower or the pile (now ${n0(s.switchedLoadA)} A)`);
      case 'pile-current':
        if (s.pileA >= c.minA && s.pileA <= c.maxA) return null;
        return say(() => `Set the pile to about ${n0((c.minA + c.maxA) / 2 - 2.5)} A, between ${n0(c.minA)} and ${n0(c.maxA)} A (now ${n0(s.pileA)} A)`);
      case 'output-share-of-rating': {
        const lo = c.min * this.car.ratedA;
        const hi = c.max * this.car.ratedA;
        // A unit that cannot give that much is loaded until the battery supplies the rest: it then gives all it can.
        if ((s.outputA >= lo && s.outputA <= hi) || (s.outputA < lo && s.pileA >= PILE_OFF_A && s.batteryA > OUTPUT_AT_LIMIT_BATTERY_A)) return null;
        return say(() => `Turn the pile ${s.outputA < lo ? 'up' : 'down'} until the alternator gives about half its rating, ${n0(lo)}–${n0(hi)} A on the B+ cable, or until the battery starts to supply the rest (now ${n0(s.outputA)} A)`);
      }
      case 'post-voltage': {
        const v = s.voltmeterV;
        if (v !== null && v >= c.minV && v <= c.maxV) return null;
        return say(() => `Load the pile until the posts read about 12 V, ${c.minV.toFixed(1)}–${c.maxV.toFixed(1)} V (${v === null ? 'no reading' : `now ${v.toFixed(2)} V`})`);
      }
      case 'series-ammeter':
        return s.ammeterInSeries ? null : say(() => 'Fit the series ammeter at the battery negative');
      case 'modules-asleep':
        return s.modulesAwakeS <= 0 ? null : say(() => `Wait for the modules to go to sleep (about ${durationWords(Math.ceil(s.modulesAwakeS))} left)`);
      case 'surface-charge-settled': {
        if (!this.charged) return null;
        const restMs = this.restSinceMs === null ? 0 : s.atMs - this.restSinceMs;
        const keyOffMs = this.keyOffSinceMs === null ? 0 : s.atMs - this.keyOffSinceMs;
        if (keyOffMs >= c.longRestS * 1000) return null;
        if (this.discharged && restMs >= c.restS * 1000) return null;
        if (this.discharged) return say(() => `Surface charge removed: now rest ${durationWords(c.restS)} with the key off (${secs(restMs)} so far)`);
        const heldMs = this.dischargeSinceMs === null ? 0 : s.atMs - this.dischargeSinceMs;
        return say(
          () =>
            `The battery carries a surface charge: draw ${n0(c.dischargeA)} A or more for ${durationWords(c.dischargeS)} (headlamps or the pile; ${secs(heldMs)} so far), then rest ${durationWords(c.restS)} with the key off, or let it rest ${durationWords(c.longRestS)}`,
        );
      }
      case 'cranking':
        if (!this.crank) return say(() => 'Crank the engine (key to start) with the leads on the battery posts');
        return this.crank.leadsOk ? null : say(() => 'The leads were not on the battery posts all through the crank: crank again with them there');
    }
  }
}
