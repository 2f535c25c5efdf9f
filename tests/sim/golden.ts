/**
 * The golden runs: a varied set of attempts (several cars, every demo
 * scenario, every fault kind, intermittent faults, key starts and stops, rpm
 * changes, pile sweeps, accessories, lead and clamp moves, a blown fusible
 * link, an overheated pile, long runs) and a digest of everything the model
 * gives for each: every state of every step (bit for bit), the snapshots and
 * the final point of `runAttempt` as JSON, the meters every 100 ms of sim
 * time, a scope trace, the rectifier's own solution and the output curves.
 *
 * This is a self-consistency check of the model against its own earlier
 * output, not a check against the outside world: the digests stored in
 * golden-runs.test.ts were recorded from the model before its speed work, so
 * any change meant only to make it faster must leave every digest as it is.
 * A change meant to alter the physics re-records them, and the checkpoints
 * that say where a digest first differs (golden-locate.ts), with
 * `npx tsx tests/sim/record-golden.ts`.
 */
import { createHash } from 'node:crypto';
import type { Hash } from 'node:crypto';
import { readdirSync, readFileSync } from 'node:fs';
import { defaultVehicleParams } from '../../sim/params';
import type { VehicleParams } from '../../sim/params';
import { FAULT_KINDS } from '../../sim/faults';
import type { Fault, FaultKind } from '../../sim/faults';
import { CONDUCTORS, CONNECTION_POINTS } from '../../sim/inputs';
import type { ConnectionPoint, InputEvent, KeyPosition } from '../../sim/inputs';
import { advance, orderEvents, runAttempt, startPoint, stateAt } from '../../sim/replay';
import type { ReplayPoint } from '../../sim/replay';
import { DT_MS, initialState, step } from '../../sim/step';
import type { SimState } from '../../sim/step';
import { outputCurve, readMeters, rippleTrace } from '../../sim/instruments';
import { rectifierCircuitAt, solveRectifier } from '../../sim/rectifier';
import { CHECKPOINT_EVERY_MS, FieldTags, partTag, RUN_PARTS, type RunCheckpoints } from './golden-locate';

export interface GoldenRun {
  name: string;
  params: VehicleParams;
  seed: number;
  events: InputEvent[];
  untilMs: number;
  /** What the run is there to reach (checked so that the run still covers it). */
  reaches?: (states: ReachedFlags) => boolean;
}

/** Conditions seen at least once during a run. */
export interface ReachedFlags {
  running: boolean;
  stalled: boolean;
  linkBlown: boolean;
  pileTripped: boolean;
  pileReset: boolean;
  ammeterFuseBlown: boolean;
  beltSlipping: boolean;
  modulesAsleep: boolean;
  chargeWarning: boolean;
  overvoltage: boolean;
}

// ---- Exact serialisation ---------------------------------------------------

/** JSON that keeps -0, NaN and the infinities apart from 0 and null. */
export function exactJson(value: unknown): string {
  return JSON.stringify(value, (_key, v: unknown) => {
    if (typeof v === 'number' && (!Number.isFinite(v) || Object.is(v, -0))) return `#${String(Object.is(v, -0) ? '-0' : v)}`;
    return v;
  });
}

const bits = new Float64Array(512);

/** Every number of a value as its IEEE-754 bits, booleans and strings beside them, in key order. */
function feedBits(h: Hash, value: unknown): void {
  let n = 0;
  const strings: string[] = [];
  const walk = (v: unknown): void => {
    if (typeof v === 'number') bits[n++] = v;
    else if (typeof v === 'boolean') bits[n++] = v ? 1 : -1;
    else if (v === null || v === undefined) bits[n++] = v === null ? -2 : -3;
    else if (typeof v === 'string') {
      bits[n++] = -4;
      strings.push(v);
    } else if (Array.isArray(v)) {
      bits[n++] = -5 - v.length;
      for (const x of v) walk(x);
    } else if (typeof v === 'object') {
      for (const k of Object.keys(v)) walk((v as Record<string, unknown>)[k]);
    }
  };
  walk(value);
  h.update(new Uint8Array(bits.buffer, 0, n * 8));
  h.update(strings.join('\u0000'));
}

// ---- Event helpers -----------------------------------------------------------

const at = (s: number): number => Math.round(s * 1000);
const key = (s: number, position: KeyPosition): InputEvent => ({ kind: 'key', atMs: at(s), position });
const rpm = (s: number, value: number): InputEvent => ({ kind: 'rpm', atMs: at(s), rpm: value });
const pile = (s: number, dial01: number): InputEvent => ({ kind: 'pile', atMs: at(s), dial01 });
const leads = (s: number, red: ConnectionPoint | null, black: ConnectionPoint | null): InputEvent[] => [
  { kind: 'lead', atMs: at(s), which: 'red', point: red },
  { kind: 'lead', atMs: at(s), which: 'black', point: black },
];
const inject = (s: number, fault: Fault): InputEvent => ({ kind: 'fault-inject', atMs: at(s), fault });
const fault = (id: string, kind: FaultKind, severity01: number, onsetS: number, intermittent: Fault['intermittent'] = null): Fault => ({
  id,
  kind,
  severity01,
  onsetS,
  intermittent,
});

function pileSweep(fromS: number, stepS: number, steps: number, top01: number): InputEvent[] {
  const out: InputEvent[] = [];
  for (let k = 0; k <= steps; k++) out.push(pile(fromS + k * stepS, (top01 * k) / steps));
  return out;
}

/** The student's full round of tests on one car, about four minutes. */
function fullProcedure(p: VehicleParams, scenarioFaults: readonly Fault[]): InputEvent[] {
  const accessories = p.loads.accessories.map((a) => a.id);
  const events: InputEvent[] = [
    ...scenarioFaults.map((f) => inject(0, f)),
    ...leads(0, 'battery-pos', 'battery-neg'),
    { kind: 'clamp-zero', atMs: at(0.5) },
    { kind: 'clamp', atMs: at(1), conductor: 'bplus-cable', arrow: 'toward-battery' },
    key(2, 'on'),
    key(3, 'start'),
    key(4.2, 'on'),
    rpm(8, 2000),
    ...pileSweep(12, 0.5, 30, 1),
    pile(28, 0),
    ...accessories.map((id, k) => ({ kind: 'accessory' as const, atMs: at(35 + k * 0.7), id, on: true })),
    ...accessories.map((id, k) => ({ kind: 'accessory' as const, atMs: at(45 + k * 0.3), id, on: false })),
    ...leads(50, 'alt-bplus', 'battery-pos'),
    pile(51, 0.4),
    ...leads(55, 'battery-neg', 'alt-case'),
    pile(60, 0),
    ...leads(61, 'alt-bplus', 'alt-case'),
    { kind: 'clamp', atMs: at(62), conductor: 'battery-neg-cable', arrow: 'toward-alternator' },
    { kind: 'clamp-zero', atMs: at(64) },
    { kind: 'clamp', atMs: at(66), conductor: 'ground-strap', arrow: 'toward-battery' },
    { kind: 'clamp', atMs: at(68), conductor: 'sense-line', arrow: 'toward-battery' },
    rpm(70, 3500),
    rpm(80, 0),
    ...leads(85, 'jump-pos', 'jump-neg'),
    key(90, 'off'),
    ...leads(91, 'battery-pos', 'battery-neg'),
    { kind: 'ammeter', atMs: at(92), inSeries: true },
    { kind: 'clamp', atMs: at(93), conductor: 'battery-pos-cable', arrow: 'toward-battery' },
    { kind: 'bplus-disconnect', atMs: at(200), connected: false },
    { kind: 'bplus-disconnect', atMs: at(210), connected: true },
    { kind: 'ammeter', atMs: at(220), inSeries: false },
    key(230, 'start'),
    ...leads(230.5, 'engine-ground', 'chassis'),
    key(232, 'on'),
    pile(235, 0.5),
  ];
  return events;
}

/** A shorter round: start, 2,000 rpm, a pile sweep, headlamps, leads moved, stop. */
function shortProcedure(p: VehicleParams): InputEvent[] {
  const first = p.loads.accessories[0]?.id ?? 'none';
  return [
    ...leads(0, 'battery-pos', 'battery-neg'),
    { kind: 'clamp', atMs: at(0.3), conductor: 'bplus-cable', arrow: 'toward-battery' },
    key(1, 'start'),
    key(2.2, 'on'),
    rpm(4, 2000),
    ...pileSweep(8, 0.4, 20, 0.9),
    pile(17, 0),
    { kind: 'accessory', atMs: at(20), id: first, on: true },
    ...leads(25, 'alt-bplus', 'battery-pos'),
    pile(26, 0.5),
    ...leads(30, 'battery-neg', 'alt-case'),
    pile(34, 0),
    rpm(38, 3000),
    { kind: 'accessory', atMs: at(42), id: first, on: false },
    rpm(46, 0),
    key(52, 'off'),
  ];
}

/** The attempt `npm run bench:sim` re-runs: start, rpm changes, pile sweeps, meters moved. */
function benchEvents(minutes: number): InputEvent[] {
  const events: InputEvent[] = [
    ...leads(2, 'battery-pos', null),
    { kind: 'lead', atMs: 2500, which: 'black', point: 'battery-neg' },
    { kind: 'clamp-zero', atMs: 4000 },
    { kind: 'clamp', atMs: 5000, conductor: 'bplus-cable', arrow: 'toward-battery' },
    key(10, 'start'),
    key(11.2, 'on'),
  ];
  for (let t = 30000; t < minutes * 60000 - 60000; t += 90000) {
    events.push({ kind: 'rpm', atMs: t, rpm: 2000 });
    for (let k = 0; k <= 20; k++) events.push({ kind: 'pile', atMs: t + 5000 + k * 400, dial01: k / 26 });
    events.push({ kind: 'pile', atMs: t + 20000, dial01: 0 });
    events.push({ kind: 'accessory', atMs: t + 25000, id: 'headlamps', on: true });
    events.push({ kind: 'lead', atMs: t + 30000, which: 'red', point: 'alt-bplus' });
    events.push({ kind: 'lead', atMs: t + 40000, which: 'red', point: 'battery-pos' });
    events.push({ kind: 'accessory', atMs: t + 50000, id: 'headlamps', on: false });
    events.push({ kind: 'rpm', atMs: t + 60000, rpm: 0 });
  }
  return events;
}

/** mulberry32, for the random attempts (the runs must be the same on every machine). */
function generator(seed: number): () => number {
  let s = seed >>> 0;
  return () => {
    s = (s + 0x6d2b79f5) >>> 0;
    let t = Math.imul(s ^ (s >>> 15), 1 | s);
    t = (t + Math.imul(t ^ (t >>> 7), 61 | t)) ^ t;
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

/** A random attempt: every kind of event, at random moments, random faults (some intermittent, some cleared). */
function randomEvents(seed: number, p: VehicleParams, seconds: number): InputEvent[] {
  const r = generator(seed);
  const pick = <T>(xs: readonly T[]): T => xs[Math.floor(r() * xs.length)]!;
  const ids = [...p.loads.accessories.map((a) => a.id), 'not-fitted'];
  const events: InputEvent[] = [key(0.5, 'start'), key(1.8, 'on')];
  const count = 20 + Math.floor(r() * 60);
  for (let i = 0; i < count; i++) {
    // Whole and odd milliseconds alike, out of order: runAttempt sorts them.
    const atMs = Math.floor(r() * seconds * 1000);
    const kind = Math.floor(r() * 12);
    switch (kind) {
      case 0:
        events.push({ kind: 'key', atMs, position: pick(['off', 'on', 'start', 'on'] as const) });
        break;
      case 1:
        events.push({ kind: 'rpm', atMs, rpm: pick([0, 600, 1200, 2000, 2500, 3500, 5000]) });
        break;
      case 2:
        events.push({ kind: 'accessory', atMs, id: pick(ids), on: r() < 0.6 });
        break;
      case 3:
        events.push({ kind: 'pile', atMs, dial01: r() < 0.3 ? 0 : r() * 1.1 });
        break;
      case 4:
        events.push({ kind: 'lead', atMs, which: r() < 0.5 ? 'red' : 'black', point: r() < 0.1 ? null : pick(CONNECTION_POINTS) });
        break;
      case 5:
        events.push({ kind: 'clamp', atMs, conductor: r() < 0.15 ? null : pick(CONDUCTORS), arrow: r() < 0.5 ? 'toward-battery' : 'toward-alternator' });
        break;
      case 6:
        events.push({ kind: 'clamp-zero', atMs });
        break;
      case 7:
        events.push({ kind: 'ammeter', atMs, inSeries: r() < 0.5 });
        break;
      case 8:
        events.push({ kind: 'bplus-disconnect', atMs, connected: r() < 0.6 });
        break;
      case 9:
      case 10: {
        const intermittent = r() < 0.4 ? { periodS: 0.3 + r() * 6, onFraction01: r() } : null;
        events.push(inject(atMs / 1000, fault(`f${Math.floor(r() * 4)}`, pick(FAULT_KINDS), r(), atMs / 1000 + r() * 10, intermittent)));
        break;
      }
      default:
        events.push({ kind: 'fault-clear', atMs, faultId: `f${Math.floor(r() * 4)}` });
    }
  }
  return events;
}

// ---- The runs ---------------------------------------------------------------

interface ScenarioFile {
  file: string;
  params: VehicleParams;
  faults: Fault[];
}

function scenarioFiles(): ScenarioFile[] {
  const dir = new URL('../../scenarios/', import.meta.url);
  return readdirSync(dir)
    .filter((f) => f.endsWith('.json'))
    .sort()
    .map((file) => {
      const raw = JSON.parse(readFileSync(new URL(file, dir), 'utf8')) as { vehicle: { params: VehicleParams }; faults: Fault[] };
      return { file, params: raw.vehicle.params, faults: raw.faults };
    });
}

function withParams(edit: (p: VehicleParams) => void): VehicleParams {
  const p = defaultVehicleParams();
  edit(p);
  return p;
}

export function goldenRuns(): GoldenRun[] {
  const runs: GoldenRun[] = [];
  const scenarios = scenarioFiles();

  runs.push({ name: 'bench attempt, 10 minutes', params: defaultVehicleParams(), seed: 1, events: benchEvents(10), untilMs: 600_000 });
  runs.push({ name: 'bench attempt, 30 minutes, grading warm-up car', params: defaultVehicleParams(), seed: 7, events: [inject(0, fault('warm-up', 'diode-open', 1, 0)), ...benchEvents(30)], untilMs: 1_800_000 });

  for (const s of scenarios) {
    runs.push({ name: `scenario ${s.file}, full round`, params: s.params, seed: 11, events: fullProcedure(s.params, s.faults), untilMs: 240_000 });
  }

  const severities = [0, 0.35, 0.7, 1];
  FAULT_KINDS.forEach((kind, k) => {
    const severity = severities[k % severities.length]!;
    const intermittent = k % 3 === 0 ? { periodS: 1.5 + k * 0.25, onFraction01: 0.3 + 0.04 * k } : null;
    runs.push({
      name: `default car, ${kind} injected live${intermittent ? ', intermittent' : ''}`,
      params: defaultVehicleParams(),
      seed: 100 + k,
      events: [
        ...shortProcedure(defaultVehicleParams()),
        inject(5, fault(`live-${kind}`, kind, severity, 6 + (k % 4), intermittent)),
        { kind: 'fault-clear', atMs: at(48), faultId: `live-${kind}` },
      ],
      untilMs: 58_000,
    });
  });

  runs.push({
    name: 'three intermittent faults at once, one cleared and re-injected',
    params: scenarios[0]!.params,
    seed: 5,
    events: [
      ...shortProcedure(scenarios[0]!.params),
      inject(0, fault('a', 'bplus-high-resistance', 0.8, 3, { periodS: 1.3, onFraction01: 0.45 })),
      inject(2, fault('b', 'field-open', 0.4, 9, { periodS: 0.7, onFraction01: 0.5 })),
      inject(3, fault('c', 'diode-shorted', 0.6, 10, { periodS: 4, onFraction01: 0.25 })),
      { kind: 'fault-clear', atMs: at(30), faultId: 'b' },
      inject(33, fault('b', 'stator-phase-open', 1, 34, { periodS: 2.2, onFraction01: 0.6 })),
    ],
    untilMs: 60_000,
  });

  runs.push({
    name: 'a fusible link blown by a heavy load',
    params: withParams((p) => {
      p.wiring.fusibleLinkRatingA = 60;
      p.wiring.fusibleLinkI2tA2s = 40_000;
    }),
    seed: 21,
    events: [...leads(0, 'alt-bplus', 'battery-pos'), key(0.5, 'start'), key(1.8, 'on'), rpm(3, 3000), pile(5, 0.8), pile(40, 0), rpm(45, 0)],
    untilMs: 60_000,
    reaches: (f) => f.linkBlown,
  });

  runs.push({
    name: 'the pile overheats, trips, cools and resets',
    params: withParams((p) => {
      p.pile.heatCapacityJPerC = 150;
      p.pile.coolingWPerC = 3;
    }),
    seed: 22,
    events: [...leads(0, 'battery-pos', 'battery-neg'), key(0.5, 'start'), key(1.8, 'on'), rpm(3, 2500), pile(5, 1), pile(120, 0), pile(260, 0.6), pile(275, 0)],
    untilMs: 290_000,
    reaches: (f) => f.pileTripped && f.pileReset,
  });

  runs.push({
    name: 'the series ammeter fuse blows with the key on',
    params: defaultVehicleParams(),
    seed: 23,
    events: [{ kind: 'ammeter', atMs: 0, inSeries: true }, key(1, 'on'), { kind: 'accessory', atMs: 2000, id: 'headlamps', on: true }, key(20, 'off'), { kind: 'ammeter', atMs: 25_000, inSeries: false }, key(26, 'start'), key(27.5, 'on')],
    untilMs: 35_000,
    reaches: (f) => f.ammeterFuseBlown,
  });

  runs.push({
    name: 'a flat weak battery stalls the crank, then a second try',
    params: withParams((p) => {
      p.battery.initialSoc01 = 0.15;
      p.battery.tempC = -10;
    }),
    seed: 24,
    events: [inject(0, fault('weak', 'battery-weak', 1, 0)), key(1, 'start'), key(6, 'on'), key(8, 'start'), key(13, 'off'), key(14, 'start'), key(16, 'on')],
    untilMs: 25_000,
    reaches: (f) => f.stalled,
  });

  runs.push({
    name: 'a slipping belt under heavy load and rpm changes',
    params: withParams((p) => {
      p.belt.gripNm = 9;
    }),
    seed: 25,
    events: [key(0.5, 'start'), key(1.8, 'on'), rpm(3, 1200), pile(5, 0.9), rpm(10, 3500), rpm(14, 900), pile(18, 0.3), rpm(22, 2600), pile(26, 0), rpm(30, 0)],
    untilMs: 40_000,
    reaches: (f) => f.beltSlipping,
  });

  runs.push({
    name: 'a regulator sensing B+',
    params: withParams((p) => {
      p.regulator.sense = 'bplus';
      p.wiring.bplusExtraOhm = 0.02;
    }),
    seed: 26,
    events: shortProcedure(defaultVehicleParams()),
    untilMs: 58_000,
  });
  runs.push({
    name: 'an open sense line',
    params: withParams((p) => {
      p.wiring.senseLineOhm = 5000;
    }),
    seed: 27,
    events: shortProcedure(defaultVehicleParams()),
    untilMs: 58_000,
  });

  runs.push({
    name: 'full field with B+ removed at speed: the overvoltage cut-out',
    params: defaultVehicleParams(),
    seed: 28,
    events: [
      inject(0, fault('ff', 'regulator-full-field', 1, 0)),
      ...leads(0, 'alt-bplus', 'alt-case'),
      key(0.5, 'start'),
      key(1.8, 'on'),
      rpm(3, 3500),
      { kind: 'bplus-disconnect', atMs: 6000, connected: false },
      { kind: 'bplus-disconnect', atMs: 12_000, connected: true },
      key(18, 'off'),
    ],
    untilMs: 22_000,
    reaches: (f) => f.overvoltage,
  });

  runs.push({
    name: 'more than thirty faults (the uncached path)',
    params: defaultVehicleParams(),
    seed: 29,
    events: [
      ...Array.from({ length: 31 }, (_, i) => inject(0, fault(`many-${i}`, i % 2 ? 'post-corroded' : 'ground-high-resistance', 0.01 + i * 0.002, i * 0.1, i % 5 === 0 ? { periodS: 0.9, onFraction01: 0.5 } : null))),
      key(0.5, 'start'),
      key(1.8, 'on'),
      rpm(2.5, 2000),
      pile(3, 0.5),
    ],
    untilMs: 5_000,
  });

  runs.push({
    name: 'key off for ten minutes: modules sleep, surface charge settles',
    params: scenarios.find((s) => s.file.startsWith('key-off-draw'))!.params,
    seed: 30,
    events: [key(0.5, 'start'), key(1.8, 'on'), rpm(3, 2500), key(60, 'off'), { kind: 'ammeter', atMs: 65_000, inSeries: true }, { kind: 'ammeter', atMs: 400_000, inSeries: false }, { kind: 'ammeter', atMs: 401_000, inSeries: true }],
    untilMs: 660_000,
    reaches: (f) => f.modulesAsleep && f.chargeWarning,
  });

  const cars = [defaultVehicleParams(), ...scenarios.map((s) => s.params)];
  for (let k = 0; k < 12; k++) {
    const params = cars[(k * 5) % cars.length]!;
    runs.push({ name: `random attempt ${k}`, params, seed: 1000 + k, events: randomEvents(7000 + k, params, 90), untilMs: 90_000 + k * 7 });
  }
  return runs;
}

// ---- Digest of one run ---------------------------------------------------------

const SNAPSHOT_EVERY_MS = 1000;

function noteReached(f: ReachedFlags, s: SimState, prev: SimState): void {
  if (s.engineStatus === 'running') f.running = true;
  if (s.engineStatus === 'stalled') f.stalled = true;
  if (s.fusibleLinkBlown) f.linkBlown = true;
  if (s.pileTripped) f.pileTripped = true;
  if (prev.pileTripped && !s.pileTripped) f.pileReset = true;
  if (s.ammeterFuseBlown) f.ammeterFuseBlown = true;
  if (s.beltSlipping) f.beltSlipping = true;
  if (s.timeMs > 0 && s.modulesAwakeS === 0) f.modulesAsleep = true;
  if (s.chargeWarning) f.chargeWarning = true;
  if (s.net.nodeV.bplus - s.net.nodeV.altCase > 20) f.overvoltage = true;
}

export interface RunDigest {
  digest: string;
  /** Where the run stands at each checkpoint, for naming where a digest first differs (golden-locate.ts). */
  checkpoints: RunCheckpoints;
  reached: ReachedFlags;
  /** Whether the step-by-step run and runAttempt ended on the same point, and seeks from stored snapshots agreed. */
  consistent: boolean;
}

/** Tags one state's fields (the network's parts one by one) for the checkpoints; the controls are tagged where they change. */
function tagState(tags: FieldTags, s: SimState): void {
  tags.at(s.timeMs);
  for (const key of Object.keys(s) as (keyof SimState)[]) {
    if (key === 'controls') continue;
    if (key === 'net') for (const part of Object.keys(s.net) as (keyof SimState['net'])[]) tags.add(`net.${part}`, s.net[part]);
    else tags.add(key, s[key]);
  }
}

/** A run's digest and the checkpoints beside it (windows of `everyMs` of sim time). */
export function digestRun(run: GoldenRun, everyMs = CHECKPOINT_EVERY_MS): RunDigest {
  const h = createHash('sha256');
  const { params, seed, untilMs } = run;
  const ordered = orderEvents(run.events);
  // Each part of the digest once more on its own, and the states field by field, to say where a digest differs.
  const parts = RUN_PARTS.map(() => createHash('sha256'));
  const feed = (part: number, text: string) => {
    h.update(text);
    parts[part]!.update(text);
  };
  const tags = new FieldTags(everyMs);

  // runAttempt: snapshots and the final point, as JSON (key order included), with the instruments.
  const attempt = runAttempt(params, seed, run.events, untilMs, { snapshotEveryMs: SNAPSHOT_EVERY_MS });
  attempt.snapshots.forEach((snap, k) => {
    feed(0, exactJson(snap));
    feed(0, exactJson(readMeters(params, snap.state, snap.controls)));
    if (k % 5 === 0) {
      feed(1, exactJson(rippleTrace(params, snap.state, 72)));
      feed(1, exactJson(solveRectifier(rectifierCircuitAt(params, snap.state))));
    }
  });
  feed(0, exactJson(attempt.final));
  feed(0, exactJson(readMeters(params, attempt.final.state, attempt.final.controls)));

  // Every step on its own, bit for bit, and the meters every 100 ms as the grader takes them.
  const reached: ReachedFlags = {
    running: false,
    stalled: false,
    linkBlown: false,
    pileTripped: false,
    pileReset: false,
    ammeterFuseBlown: false,
    beltSlipping: false,
    modulesAsleep: false,
    chargeWarning: false,
    overvoltage: false,
  };
  let point: ReplayPoint = startPoint(params, seed);
  feedBits(h, point.state);
  tagState(tags, point.state);
  tags.add('controls', exactJson(point.state.controls));
  const total = Math.floor(untilMs / DT_MS);
  let lastControls = null as unknown;
  for (let i = 1; i <= total; i++) {
    const prev = point.state;
    point = advance(params, point, ordered, 1);
    const s = point.state;
    noteReached(reached, s, prev);
    tagState(tags, s);
    if (s.controls !== lastControls) {
      lastControls = s.controls;
      const controls = exactJson(s.controls);
      h.update(controls);
      tags.add('controls', controls);
    }
    const { controls: _controls, ...rest } = s;
    feedBits(h, rest);
    if (i % 10 === 0) {
      const meters = readMeters(params, s);
      feedBits(h, meters);
      tags.add('meters', meters);
    }
  }
  let consistent = exactJson(point) === exactJson(attempt.final);

  // Seeks from snapshots that went through JSON (as the server stores them)
  // land on the same states as JSON (JSON has no -0, so a zero's sign may differ).
  const stored = JSON.parse(JSON.stringify(attempt.snapshots)) as ReplayPoint[];
  for (const frac of [0.13, 0.5, 0.91]) {
    const atMs = Math.floor(untilMs * frac) + 3;
    const a = stateAt(params, seed, run.events, atMs, stored);
    const b = stateAt(params, seed, run.events, atMs, attempt.snapshots);
    if (JSON.stringify(a) !== JSON.stringify(b)) consistent = false;
    feed(2, exactJson(a));
    feed(2, exactJson(b));
  }

  // The output curves for the changes (faults) in place at the end.
  const changes = attempt.final.controls.changes;
  feed(3, exactJson(outputCurve(params, changes, { hot: false })));
  feed(3, exactJson(outputCurve(params, changes, { hot: true })));
  const checkpoints = { fields: tags.fields, windows: tags.finish(), parts: parts.map((p) => partTag(p.digest('hex'))).join('') };
  return { digest: h.digest('hex'), checkpoints, reached, consistent };
}

/** Sim time each step length of `digestOtherSteps` runs; its checkpoints run the four one after another. */
export const OTHER_STEPS_RUN_MS = 20_000;
export const OTHER_STEP_LENGTHS_MS = [5, 20, 10, 1] as const;

/** The bare step at other step lengths than the replay's (the step's dt is a parameter). */
export function digestOtherSteps(everyMs = CHECKPOINT_EVERY_MS): { digest: string; checkpoints: RunCheckpoints } {
  const h = createHash('sha256');
  const tags = new FieldTags(everyMs);
  const params = defaultVehicleParams();
  OTHER_STEP_LENGTHS_MS.forEach((dtMs, k) => {
    let s = initialState(params, 3);
    const starting = { ...s.controls, key: 'start' as const, leads: { red: 'battery-pos' as const, black: 'battery-neg' as const } };
    const running = { ...starting, key: 'on' as const, heldRpm: 2200, pileDial01: 0.35, accessoriesOn: ['blower', 'headlamps'] };
    const n = Math.round(OTHER_STEPS_RUN_MS / dtMs);
    for (let i = 0; i < n; i++) {
      s = step(params, s, i < 1500 / dtMs ? starting : running, dtMs);
      feedBits(h, s);
      tagState(tags, { ...s, timeMs: k * OTHER_STEPS_RUN_MS + s.timeMs - dtMs });
      tags.add('controls', s.controls);
    }
  });
  return { digest: h.digest('hex'), checkpoints: { fields: tags.fields, windows: tags.finish(), parts: '' } };
}

/** The model's elementary functions, as golden.ts digests them. */
export interface MathFunctions {
  detExp: (x: number) => number;
  detExpm1: (x: number) => number;
  detLog: (x: number) => number;
  detLog1p: (x: number) => number;
  detTanh: (x: number) => number;
  detSin: (x: number) => number;
  detCos: (x: number) => number;
}

/** Every elementary function, bit for bit, over wide random ranges and the awkward values. */
export function digestMath(f: MathFunctions): string {
  return digestMathParts(f).digest;
}

/** The digest of `digestMath` and, beside it, a tag of each function's own outputs (to name the one that differs). */
export function digestMathParts(f: MathFunctions): { digest: string; byFunction: Record<string, string> } {
  const h = createHash('sha256');
  const byFunction: Record<string, string> = {};
  const own = (name: string, bytes: Uint8Array) => {
    h.update(bytes);
    byFunction[name] = partTag(createHash('sha256').update(bytes).digest('hex'));
  };
  const r = generator(99);
  const special = [0, -0, 1, -1, 0.5, 2, 1e-300, 5e-324, 2.2250738585072014e-308, 1e-4, -1e-4, 0.35, -0.35, 20, -20, 709.78, -745.2, 1e308, Infinity, -Infinity, NaN];
  const xs: number[] = [...special];
  for (let i = 0; i < 20_000; i++) xs.push((r() - 0.5) * 2 * 10 ** (r() * 40 - 20));
  for (let i = 0; i < 20_000; i++) xs.push((r() - 0.5) * 1500);
  for (let i = 0; i < 20_000; i++) xs.push(10 ** (r() * 600 - 300));
  const out = new Float64Array(xs.length);
  const fns = ['detExp', 'detExpm1', 'detLog', 'detLog1p', 'detTanh'] as const;
  for (const name of fns) {
    const fn = f[name];
    xs.forEach((x, k) => (out[k] = fn(x)));
    own(name, new Uint8Array(out.buffer));
  }
  // The trigonometric functions within the few turns the model asks.
  const angles = [...special.filter((x) => Math.abs(x) < 30), ...Array.from({ length: 20_000 }, () => (r() - 0.5) * 60)];
  const trig = new Float64Array(angles.length);
  for (const name of ['detSin', 'detCos'] as const) {
    const fn = f[name];
    angles.forEach((x, k) => (trig[k] = fn(x)));
    own(name, new Uint8Array(trig.buffer));
  }
  return { digest: h.digest('hex'), byFunction };
}

/** The name the bare-step digest is recorded under. */
export const OTHER_STEPS_NAME = 'bare step at 5, 20, 10 and 1 ms';

/** Every digest and its checkpoints, by run name (record-golden.ts records them). */
export function goldenDigests(everyMs = CHECKPOINT_EVERY_MS, only?: (name: string) => boolean): Record<string, { digest: string; checkpoints: RunCheckpoints }> {
  const out: Record<string, { digest: string; checkpoints: RunCheckpoints }> = {};
  for (const run of goldenRuns()) {
    if (only && !only(run.name)) continue;
    const { digest, checkpoints } = digestRun(run, everyMs);
    out[run.name] = { digest, checkpoints };
  }
  if (!only || only(OTHER_STEPS_NAME)) out[OTHER_STEPS_NAME] = digestOtherSteps(everyMs);
  return out;
}
